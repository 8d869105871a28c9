package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
)

// isTerminal reports whether w is an interactive terminal (a character
// device), where a progress bar is wanted; logs and pipes get none.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}

// progressBar returns a callback that redraws a one-line bar on w.
func progressBar(w io.Writer) func(done, total int) {
	var mu sync.Mutex
	last := -1
	return func(done, total int) {
		if total <= 0 {
			return
		}
		pct := 100 * done / total
		mu.Lock()
		defer mu.Unlock()
		if pct == last && done != total {
			return
		}
		last = pct
		const width = 30
		n := width * done / total
		fmt.Fprintf(w, "\rbuilding station-years [%s%s] %3d%% (%d/%d)", strings.Repeat("#", n), strings.Repeat(".", width-n), pct, done, total)
		if done == total {
			fmt.Fprintln(w)
		}
	}
}
