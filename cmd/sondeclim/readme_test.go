package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// readmeCommands returns the sondeclim command lines of README.md's sh
// blocks (those starting with "./sondeclim "), continuation lines joined,
// split into words as the shell would for the quoting the README uses
// (single and double quotes, no variables), without the program name, a
// trailing comment or an output redirection.
func readmeCommands(t *testing.T, readme string) [][]string {
	t.Helper()
	var cmds [][]string
	inSh := false
	var pending string
	for _, line := range strings.Split(readme, "\n") {
		switch {
		case strings.HasPrefix(line, "```sh"):
			inSh = true
			continue
		case strings.HasPrefix(line, "```"):
			inSh = false
			continue
		}
		if !inSh {
			continue
		}
		if pending != "" {
			line = pending + " " + strings.TrimSpace(line)
			pending = ""
		}
		if strings.HasSuffix(line, `\`) {
			pending = strings.TrimSuffix(line, `\`)
			continue
		}
		if !strings.HasPrefix(line, "./sondeclim ") {
			continue
		}
		words, err := shellWords(strings.TrimPrefix(line, "./sondeclim "))
		if err != nil {
			t.Fatalf("README line %q: %v", line, err)
		}
		cmds = append(cmds, words)
	}
	return cmds
}

// shellWords splits s into words: quotes group, an unquoted # after a
// space starts a comment, and "> FILE" is dropped.
func shellWords(s string) ([]string, error) {
	var words []string
	var cur strings.Builder
	inWord, quote := false, byte(0)
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case quote != 0:
			if c == quote {
				quote = 0
			} else {
				cur.WriteByte(c)
			}
		case c == '\'' || c == '"':
			quote, inWord = c, true
		case c == ' ' || c == '\t':
			if inWord {
				words = append(words, cur.String())
				cur.Reset()
				inWord = false
			}
		case c == '#' && !inWord:
			i = len(s)
		default:
			cur.WriteByte(c)
			inWord = true
		}
	}
	if quote != 0 {
		return nil, os.ErrInvalid
	}
	if inWord {
		words = append(words, cur.String())
	}
	for i, w := range words {
		if w == ">" {
			words = append(words[:i], words[i+2:]...)
			break
		}
	}
	return words, nil
}

// TestReadmeExamples runs every sondeclim command of README.md's sh
// blocks, in order, in a folder where the archive files they name are the
// real validation files of the same stations (../shared/validation) and
// ./bufr holds the real BUFR messages; each must exit 0. So the README's
// examples are kept true: a renamed flag or a changed default fails here.
func TestReadmeExamples(t *testing.T) {
	if testing.Short() {
		t.Skip("runs every README example against real files")
	}
	val := sharedDir(t)
	readme, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	cmds := readmeCommands(t, string(readme))
	if len(cmds) < 10 {
		t.Fatalf("found %d example commands in README.md, expected the usage section's", len(cmds))
	}
	dir := t.TempDir()
	// Archive files named in the examples, by station: the validation file
	// of the same station stands in.
	archive := regexp.MustCompile(`^([A-Z]{3}[0-9]{8})-data\.txt(\.zip|\.gz)?$`)
	have, err := os.ReadDir(filepath.Join(val, "archive-v2"))
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range cmds {
		for _, w := range c {
			m := archive.FindStringSubmatch(w)
			if m == nil {
				continue
			}
			found := ""
			for _, e := range have {
				if strings.HasPrefix(e.Name(), m[1]) && strings.HasSuffix(e.Name(), m[2]) {
					found = filepath.Join(val, "archive-v2", e.Name())
				}
			}
			if found == "" {
				t.Fatalf("README names %s, and ../shared/validation/archive-v2 holds no file of that station", w)
			}
			if err := os.Symlink(found, filepath.Join(dir, w)); err != nil && !os.IsExist(err) {
				t.Fatal(err)
			}
		}
	}
	if err := os.Symlink(filepath.Join(val, "bufr"), filepath.Join(dir, "bufr")); err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	for _, c := range cmds {
		code, out, errs := runCmd(t, c...)
		if code != exitOK {
			t.Errorf("README example `sondeclim %s`: exit %d\n%s%s", strings.Join(c, " "), code, out, errs)
		}
	}
	t.Logf("%d README examples run", len(cmds))
}
