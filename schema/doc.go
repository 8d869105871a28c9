// Package schema defines the store's tables and writes them as Parquet.
//
// A table is described by a row struct (see SoundingRow and LevelRow): every
// exported field carries a `col` tag (the column name, snake_case with the
// unit in it) and a `doc` tag (units first, then meaning). Columns derives
// the Arrow schema from such a struct by reflection, WriteTable writes rows as
// compressed Parquet (zstd for levels, Snappy for the smaller tables) in a
// Hive-partitioned layout
//
//	STORE/TABLE/station=ID/year=YYYY/part-HASH.parquet
//
// (the ingestion engine names each file by a hash of its inputs and
// parameters and writes it with WriteFile; WriteTable, for tools and
// examples, writes part-0.parquet)
// and Markdown renders the column documentation for people. Every file
// carries the schema version (key "sondeclim.schema_version") and the table
// name (key "sondeclim.table") in its key-value metadata, so that ReadVersion
// can refuse a store written by an incompatible version.
//
// The partition columns station_id and year are stored inside each file as
// well as in the directory names. A file read on its own is therefore
// complete and keeps its exact types (VARCHAR station_id, INTEGER year). A
// reader that applies Hive partitioning takes the path values, which are
// equal to the stored ones by construction; see package queries for how the
// views pin their types.
package schema
