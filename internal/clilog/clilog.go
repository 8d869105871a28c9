// Package clilog formats log records for people reading a terminal or a
// scheduler's mail: one line per record, the level only when it is not
// INFO, the message, and the attributes after it. The structured form
// (one JSON object per record) is slog's own JSON handler; New chooses.
package clilog

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"strings"
	"sync"
	"time"
)

// Formats New accepts.
const (
	Human = "human" // one readable line per record (the default)
	JSON  = "json"  // one JSON object per record, for log collectors
)

// New returns a logger writing records at level and above to w in the
// given format (Human or JSON).
func New(w io.Writer, format string, level slog.Level) (*slog.Logger, error) {
	switch format {
	case "", Human:
		return slog.New(&Handler{w: w, mu: new(sync.Mutex), level: level}), nil
	case JSON:
		return slog.New(slog.NewJSONHandler(w, &slog.HandlerOptions{Level: level})), nil
	}
	return nil, fmt.Errorf("log format %q: want %s or %s", format, Human, JSON)
}

// Handler is the human-readable slog.Handler. A record's "detail"
// attribute (a full message) follows the message after a colon, preceded
// by its "where" attribute unless the detail already names the place; the
// "reason" attribute, which only repeats it, is left out; other attributes follow in parentheses as
// key=value.
type Handler struct {
	w     io.Writer
	mu    *sync.Mutex
	level slog.Leveler
	attrs []slog.Attr
	group string
}

// Enabled reports whether records at l are written.
func (h *Handler) Enabled(_ context.Context, l slog.Level) bool { return l >= h.level.Level() }

// WithAttrs returns a handler that adds attrs to every record.
func (h *Handler) WithAttrs(attrs []slog.Attr) slog.Handler {
	c := *h
	for _, a := range attrs {
		c.attrs = append(c.attrs[:len(c.attrs):len(c.attrs)], h.qualify(a))
	}
	return &c
}

// WithGroup returns a handler that prefixes later attribute keys.
func (h *Handler) WithGroup(name string) slog.Handler {
	c := *h
	if c.group != "" {
		name = c.group + "." + name
	}
	c.group = name
	return &c
}

func (h *Handler) qualify(a slog.Attr) slog.Attr {
	if h.group != "" {
		a.Key = h.group + "." + a.Key
	}
	return a
}

// Handle writes one line.
func (h *Handler) Handle(_ context.Context, r slog.Record) error {
	var b strings.Builder
	switch {
	case r.Level >= slog.LevelError:
		b.WriteString("error: ")
	case r.Level >= slog.LevelWarn:
		b.WriteString("warning: ")
	case r.Level < slog.LevelInfo:
		b.WriteString("debug: ")
	}
	b.WriteString(r.Message)
	attrs := append([]slog.Attr(nil), h.attrs...)
	r.Attrs(func(a slog.Attr) bool {
		attrs = append(attrs, h.qualify(a))
		return true
	})
	detail, where := "", ""
	for _, a := range attrs {
		switch a.Key {
		case "detail":
			detail = a.Value.String()
		case "where":
			where = a.Value.String()
		}
	}
	var rest []string
	for _, a := range attrs {
		switch a.Key {
		case "detail":
			continue
		case "where", "reason":
			if detail != "" {
				continue
			}
		}
		rest = append(rest, a.Key+"="+value(a.Value))
	}
	if detail != "" {
		b.WriteString(": ")
		if where != "" && !strings.Contains(detail, where) {
			b.WriteString(where)
			b.WriteString(": ")
		}
		b.WriteString(detail)
	}
	if len(rest) > 0 {
		b.WriteString(" (")
		b.WriteString(strings.Join(rest, ", "))
		b.WriteString(")")
	}
	b.WriteByte('\n')
	h.mu.Lock()
	defer h.mu.Unlock()
	_, err := io.WriteString(h.w, b.String())
	return err
}

// value formats an attribute value: durations rounded to the millisecond,
// floats without needless digits, strings with spaces quoted.
func value(v slog.Value) string {
	v = v.Resolve()
	switch v.Kind() {
	case slog.KindDuration:
		return v.Duration().Round(time.Millisecond).String()
	case slog.KindFloat64:
		return fmt.Sprintf("%.4g", v.Float64())
	case slog.KindString:
		s := v.String()
		if s == "" || strings.ContainsAny(s, " =,()\"") {
			return fmt.Sprintf("%q", s)
		}
		return s
	}
	return v.String()
}
