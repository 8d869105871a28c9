// Package queries runs SQL over a store written by package schema, with an
// embedded in-memory DuckDB.
//
// Open makes one view per table directory of the store (soundings, levels,
// …); Query runs any SQL against them and returns a Table, which WriteText,
// WriteCSV and WriteJSON render for people and programs. The SQL of the
// built-in statistics lives in *.sql files embedded in the binary, each
// opening with a comment that says what it computes and which parameters it
// binds; parameters are always bound, never pasted into SQL text.
package queries
