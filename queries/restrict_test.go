package queries

import (
	"context"
	"fmt"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/schema"
)

// TestRestrict ingests two real archive files of different stations
// (/work/shared/validation/archive-v2: Cape Canaveral 1950 and the
// Swedish hour-99 file) and narrows the views to one station: its rows in
// every table are those the whole store gives for it (the reference is
// the unrestricted store), the other station is gone, and every view still
// answers, with no rows where the station has none.
func TestRestrict(t *testing.T) {
	src := realdata.Dir(t, "archive-v2")
	dir := filepath.Join(t.TempDir(), "store")
	files := []string{filepath.Join(src, "USM00074794-data-1950-portion.txt"), filepath.Join(src, "SWM00002527-data-hour99.txt")}
	if _, err := engine.Run(context.Background(), dir, files, engine.Options{Workers: 1}); err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	perStation := func(t *testing.T, dir string, narrow []string) map[string]string {
		db := openStore(t, dir)
		if narrow != nil {
			if err := Restrict(ctx, db, dir, narrow); err != nil {
				t.Fatal(err)
			}
		}
		out := map[string]string{}
		for _, name := range schema.TableNames() {
			var n int64
			var ids string
			q := fmt.Sprintf(`SELECT count(*), coalesce(string_agg(DISTINCT station_id, ',' ORDER BY station_id), '') FROM "%s"`, name)
			if err := db.QueryRowContext(ctx, q).Scan(&n, &ids); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			out[name] = fmt.Sprintf("%d rows of %q", n, ids)
			if narrow != nil {
				continue
			}
			if err := db.QueryRowContext(ctx, q+" WHERE station_id = 'USM00074794'").Scan(&n, &ids); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			out[name+" of one"] = fmt.Sprintf("%d rows of %q", n, ids)
		}
		return out
	}
	whole := perStation(t, dir, nil)
	// The Cape Canaveral file holds 14 soundings (14 header lines, '#'),
	// the other file 2 more.
	if got := whole[schema.TableSoundings+" of one"]; got != `14 rows of "USM00074794"` {
		t.Fatalf("USM00074794 soundings: %s, want the file's 14", got)
	}
	if whole[schema.TableSoundings] == whole[schema.TableSoundings+" of one"] {
		t.Fatalf("scaffolding: both files give one station (%s)", whole[schema.TableSoundings])
	}
	narrowed := perStation(t, dir, []string{"USM00074794"})
	t.Logf("soundings: whole %s, of one %s, narrowed %s", whole[schema.TableSoundings], whole[schema.TableSoundings+" of one"], narrowed[schema.TableSoundings])
	for _, name := range schema.TableNames() {
		if got, want := narrowed[name], whole[name+" of one"]; got != want {
			t.Errorf("%s narrowed: %s, want %s", name, got, want)
		}
	}
	none := perStation(t, dir, []string{"NOSUCH"})
	for _, name := range schema.TableNames() {
		if got := none[name]; got != `0 rows of ""` {
			t.Errorf("%s narrowed to a station the store lacks: %s", name, got)
		}
	}
}
