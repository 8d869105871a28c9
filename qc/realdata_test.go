package qc

import (
	"fmt"
	"sort"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/sounding"
)

// stats summarises the findings of many soundings per check.
type stats struct {
	soundings, levels int
	levelsBy          map[string]map[[2]int]bool // check → (sounding, level) set
	soundingsBy       map[string]map[int]bool
	badLevels         map[[2]int]bool // levels with a bad finding (not upstream)
	status            map[string]int
}

func collect(ss []*sounding.Sounding, cfg Config) *stats {
	st := &stats{levelsBy: map[string]map[[2]int]bool{}, soundingsBy: map[string]map[int]bool{},
		badLevels: map[[2]int]bool{}, status: map[string]int{}}
	for n, s := range ss {
		r := Check(s, cfg)
		st.soundings++
		st.levels += len(s.Levels)
		st.status[strings.SplitN(string(r.Status), ":", 2)[0]+statusReason(string(r.Status))]++
		for _, f := range r.Findings {
			key := string(f.Check) + "/" + f.Severity.String()
			if st.levelsBy[key] == nil {
				st.levelsBy[key], st.soundingsBy[key] = map[[2]int]bool{}, map[int]bool{}
			}
			st.levelsBy[key][[2]int{n, f.Level}] = true
			st.soundingsBy[key][n] = true
			if f.Severity == Bad && f.Check != CheckUpstream && f.Level >= 0 {
				st.badLevels[[2]int{n, f.Level}] = true
			}
		}
	}
	return st
}

func statusReason(s string) string {
	if _, r, ok := strings.Cut(s, ":"); ok {
		return ":" + r
	}
	return ""
}

func (st *stats) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d soundings, %d levels; statuses %v\n", st.soundings, st.levels, st.status)
	var keys []string
	for k := range st.levelsBy {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		nl, ns := len(st.levelsBy[k]), len(st.soundingsBy[k])
		fmt.Fprintf(&b, "  %-40s levels %6d (%6.3f %%)  soundings %4d (%5.1f %%)\n", k, nl,
			100*float64(nl)/float64(st.levels), ns, 100*float64(ns)/float64(st.soundings))
	}
	fmt.Fprintf(&b, "  levels with a bad finding of this pipeline: %d (%.3f %%)", len(st.badLevels),
		100*float64(len(st.badLevels))/float64(st.levels))
	return b.String()
}

// TestRealArchiveRates measures the share of levels and soundings each check
// flags on the real Sterling 2016 and Wien 2015 files (PROVENANCE.md). The
// archive's own quality control already removed gross errors, so levels
// flagged bad by this pipeline must be rare: under 1 % (the issue's
// acceptance criterion, common practice, no source).
func TestRealArchiveRates(t *testing.T) {
	for _, c := range []struct {
		name string
		read func(testing.TB) []*sounding.Sounding
	}{{"Sterling 2016", sterling}, {"Wien 2015", wien}} {
		ss := c.read(t)
		st := collect(ss, DefaultConfig())
		t.Logf("%s: %s", c.name, st)
		if frac := float64(len(st.badLevels)) / float64(st.levels); frac >= 0.01 {
			t.Errorf("%s: %.3f %% of levels bad, want under 1 %%", c.name, 100*frac)
		}
	}
}
