package sounding

import (
	"math/rand/v2"
	"testing"
)

// TestLevelArena drives an arena with random takes, growths, trims and
// resets, as a reader of many soundings does, and checks it against what
// a slice of its own per sounding gives (the model: common practice, no
// source): every level appended starts as the zero Level, and the levels
// of every sounding handed out since the last reset keep their values
// while later ones are written.
func TestLevelArena(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var a LevelArena
	type kept struct {
		levels []Level
		want   []float64 // PressurePa of each level, the model
	}
	var live []kept
	check := func(step int) {
		for _, h := range live {
			for i, p := range h.want {
				if h.levels[i].PressurePa != p {
					t.Fatalf("step %d: a level kept since the last reset was overwritten: %v, want %v", step, h.levels[i].PressurePa, p)
				}
			}
		}
	}
	next := 1.0
	held, mostHeld := 0, 0 // levels kept in blocks since the last reset
	for step := range 10000 {
		if rng.IntN(200) == 0 {
			check(step)
			a.Reset()
			live, held = live[:0], 0
			continue
		}
		// A sounding: take room for its declared levels (capped as the
		// archive-v2 reader caps them), append, grow past the cap.
		declared := 1 + rng.IntN(600)
		if rng.IntN(500) == 0 {
			declared = arenaBlockLevels + rng.IntN(100) // larger than a block
		}
		s := a.Take(min(declared, 256))
		present := rng.IntN(declared + 1)
		var want []float64
		for range present {
			if len(s) == cap(s) {
				s = a.Grow(s, declared)
			}
			s = s[:len(s)+1]
			lv := &s[len(s)-1]
			if *lv != (Level{}) {
				t.Fatalf("step %d: level %d handed out holding %+v, want a zero Level", step, len(s)-1, *lv)
			}
			lv.PressurePa, lv.UpstreamTier[2] = next, 'A'
			want = append(want, next)
			next++
		}
		if rng.IntN(10) == 0 {
			// A rejected sounding: written, then all of it given back.
			a.Trim(s[:0])
			continue
		}
		s = a.Trim(s)
		if len(s) != cap(s) {
			t.Fatalf("step %d: trimmed slice has length %d, capacity %d", step, len(s), cap(s))
		}
		live = append(live, kept{s, want})
		if declared <= arenaBlockLevels {
			held += len(s)
			mostHeld = max(mostHeld, held)
		}
	}
	check(-1)
	// Memory is used again after a reset: no more blocks than the most
	// levels held at once need, allowing for a sounding's worth of room
	// left at the end of each block.
	if most := mostHeld/(arenaBlockLevels-600) + 1; len(a.blocks) > most {
		t.Errorf("%d blocks, want at most %d for %d levels held at once", len(a.blocks), most, mostHeld)
	}
}

// TestLevelArenaShrink checks that Shrink keeps whole blocks for at most
// the levels asked (common practice, no source) and leaves the arena
// usable, handing out zero levels again.
func TestLevelArenaShrink(t *testing.T) {
	var a LevelArena
	for range 5 {
		s := a.Take(arenaBlockLevels)
		s = s[:cap(s)]
		s[0].PressurePa = 1
		a.Trim(s)
	}
	if len(a.blocks) != 5 {
		t.Fatalf("%d blocks, want 5", len(a.blocks))
	}
	a.Shrink(arenaBlockLevels + 1)
	if len(a.blocks) != 2 {
		t.Fatalf("%d blocks after Shrink to one block and a level, want 2", len(a.blocks))
	}
	if s := a.Take(10)[:1]; s[0] != (Level{}) {
		t.Fatalf("level after Shrink holds %+v, want a zero Level", s[0])
	}
}
