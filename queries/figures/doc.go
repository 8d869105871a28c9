// Package figures draws the store's boundary-layer climatology and single
// soundings as PNG or SVG images with gonum.org/v1/plot.
//
// Each figure is built in two steps, so that what a figure shows can be
// checked without looking at pixels:
//
//   - a Load function reads the numbers from a store opened with
//     queries.Open (LoadMonthlyHeights, LoadSBIFrequency, LoadSBIStrength,
//     LoadProfile); the SQL lives in embedded *.sql files, with every
//     parameter bound;
//   - a plotting function turns those numbers into a Figure
//     (MonthlyHeightsFigure, SBIFrequencyFigure, SBIStrengthFigure,
//     ProfileFigure), which Render writes as "png" or "svg".
//
// StationFigures builds the three climatology figures of one station;
// LoadStationData loads those of many stations with one query per kind of
// figure (a query reads every file's footer, so one query per station
// made store-wide runs slow), SplitThin sets apart the stations with too
// few valid soundings to draw, and WriteFiles renders figures several at
// once. Methods are named in words (analyze.MethodTitle); profiles with
// closely spaced levels (high resolution) are drawn as lines without a
// marker per level (MarksLevels).
// Heights are metres above ground level (AGL); potential temperature is in
// K and mixing ratio in g/kg, as in the store's tables. Box plots show the
// 10th, 25th, 50th, 75th and 90th percentiles computed by DuckDB's
// quantile_cont (Hyndman and Fan type 7, linear interpolation between
// order statistics).
package figures
