package schema

import (
	"context"
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// ReadSoundingKeys reads a soundings file (rows of SoundingRow) and
// returns its sounding_hash by launch time (µs since the Unix epoch). It
// reads only those two columns.
func ReadSoundingKeys(path string) (map[int64]string, error) {
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		return nil, fmt.Errorf("schema: %w", err)
	}
	defer pf.Close()
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: 1 << 16}, memory.DefaultAllocator)
	if err != nil {
		return nil, fmt.Errorf("schema: %s: %w", path, err)
	}
	sc := pf.MetaData().Schema
	ti, hi := sc.ColumnIndexByName("launch_time"), sc.ColumnIndexByName("sounding_hash")
	if ti < 0 || hi < 0 {
		return nil, fmt.Errorf("schema: %s: no launch_time or sounding_hash column", path)
	}
	rgs := make([]int, pf.NumRowGroups())
	for i := range rgs {
		rgs[i] = i
	}
	tbl, err := fr.ReadRowGroups(context.Background(), []int{ti, hi}, rgs)
	if err != nil {
		return nil, fmt.Errorf("schema: %s: %w", path, err)
	}
	defer tbl.Release()
	out := make(map[int64]string, tbl.NumRows())
	tr := array.NewTableReader(tbl, 1<<16)
	defer tr.Release()
	for tr.Next() {
		rec := tr.RecordBatch()
		ts, ok1 := rec.Column(0).(*array.Timestamp)
		hs, ok2 := rec.Column(1).(*array.String)
		if !ok1 || !ok2 {
			return nil, fmt.Errorf("schema: %s: unexpected column types %s, %s", path, rec.Column(0).DataType(), rec.Column(1).DataType())
		}
		unit := ts.DataType().(*arrow.TimestampType).Unit
		for i := 0; i < int(rec.NumRows()); i++ {
			out[toMicro(int64(ts.Value(i)), unit)] = hs.Value(i)
		}
	}
	return out, tr.Err()
}

func toMicro(v int64, u arrow.TimeUnit) int64 {
	switch u {
	case arrow.Second:
		return v * 1e6
	case arrow.Millisecond:
		return v * 1e3
	case arrow.Nanosecond:
		return v / 1e3
	}
	return v
}
