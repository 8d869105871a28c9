package schema

import "testing"

// TestPartRowsFollowRegistry checks that every registered table names the
// rows it writes among a partition's, so the engine's writes follow the
// registry: a partition with one row in each table gives a writer of one
// row per table, and a name outside the registry is an error.
func TestPartRowsFollowRegistry(t *testing.T) {
	levels, err := NewRows[LevelRow](1)
	if err != nil {
		t.Fatal(err)
	}
	levels.Append(LevelRow{})
	p := PartRows{Soundings: []SoundingRow{{}}, Levels: levels, Inversions: []InversionRow{{}},
		MixedLayers: []MixedLayerRow{{}}, MixingHeights: []MixingHeightRow{{}}, Afternoon: []AfternoonRow{{}},
		QCFindings: []QCFindingRow{{}},
		Descents:   DescentRows{Descents: []DescentRow{{}}, Levels: RowSlice[LevelRow]{{}}, QCFindings: []QCFindingRow{{}}}}
	for _, name := range TableNames() {
		w, err := p.Writer(name)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if w.Len() != 1 {
			t.Errorf("%s: writer holds %d rows, want the 1 collected", name, w.Len())
		}
	}
	if _, err := p.Writer(TableDays); err == nil {
		t.Errorf("%s (derived, never written): no error", TableDays)
	}
	if _, err := (&PartRows{Levels: &RowSlice[LevelRow]{}}).Writer(TableLevels); err != nil {
		t.Errorf("levels collected as a slice: %v", err)
	}

	// RowSet.Add keeps every table's rows.
	var rs RowSet
	sl := RowSlice[LevelRow]{{}}
	p.Levels = &sl
	rs.Add(&p)
	rs.Add(&p)
	for name, n := range map[string]int{TableSoundings: len(rs.Soundings), TableLevels: len(rs.Levels), TableInversions: len(rs.Inversions),
		TableMixedLayers: len(rs.MixedLayers), TableMixingHeights: len(rs.MixingHeights), TableAfternoon: len(rs.Afternoon),
		TableQCFindings: len(rs.QCFindings), TableDescents: len(rs.Descents), TableDescentLevels: len(rs.DescentLevels),
		TableDescentQCFindings: len(rs.DescentQCFindings)} {
		if n != 2 {
			t.Errorf("RowSet.Add: %s holds %d rows after two partitions of one, want 2", name, n)
		}
	}
}
