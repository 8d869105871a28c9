package clilog

import (
	"bytes"
	"encoding/json"
	"log/slog"
	"strings"
	"testing"
	"time"
)

// The human form: level word only for warnings and errors, the detail of
// a skipped item after the message, other attributes in parentheses.
func TestHuman(t *testing.T) {
	var b bytes.Buffer
	log, err := New(&b, Human, slog.LevelInfo)
	if err != nil {
		t.Fatal(err)
	}
	log.Info("inputs", "files", 2, "to_read", 1)
	log.Warn("skipped input", "where", "a.txt", "reason", "bad_level", "detail", "a.txt:3: malformed level record")
	log.Warn("skipped input", "where", "b.bin", "reason", "unknown_format", "detail", "input format not recognised")
	log.Debug("hidden")
	log.With("run", "x y").Info("done", "elapsed", 1234567*time.Microsecond)
	want := "inputs (files=2, to_read=1)\n" +
		"warning: skipped input: a.txt:3: malformed level record\n" +
		"warning: skipped input: b.bin: input format not recognised\n" +
		"done (run=\"x y\", elapsed=1.235s)\n"
	if b.String() != want {
		t.Errorf("got\n%s\nwant\n%s", b.String(), want)
	}
}

// The JSON form is one object per line with the attributes as fields.
func TestJSON(t *testing.T) {
	var b bytes.Buffer
	log, err := New(&b, JSON, slog.LevelWarn)
	if err != nil {
		t.Fatal(err)
	}
	log.Info("not shown")
	log.Warn("skipped input", "where", "a.txt")
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	if len(lines) != 1 {
		t.Fatalf("want one line, got %q", b.String())
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(lines[0]), &m); err != nil {
		t.Fatal(err)
	}
	if m["msg"] != "skipped input" || m["where"] != "a.txt" || m["level"] != "WARN" {
		t.Errorf("record %v", m)
	}
	if _, err := New(&b, "xml", slog.LevelInfo); err == nil {
		t.Error("unknown format accepted")
	}
}
