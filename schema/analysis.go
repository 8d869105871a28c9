package schema

import (
	"fmt"
	"math"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/sounding"
)

// This file maps a sounding, its quality-control report and its analysis
// to the rows of the store's tables: the output edge, where SI values turn
// into the tables' display units.

// Display-unit conversions at the output edge.
const (
	paPerHPa = 100.0
	gPerKg   = 1000.0
)

func hPa(pa float64) float64 { return pa / paPerHPa }
func degC(k float64) float64 { return k - thermo.ZeroCelsiusK }

// Seasons are the meteorological season codes of the season column, in
// calendar order from December (METHODS §8, common convention).
var Seasons = []string{"DJF", "MAM", "JJA", "SON"}

// SeasonName returns the common name of a season code in the northern
// hemisphere (DJF winter, MAM spring, JJA summer, SON autumn), or in the
// southern one, where the names are those of the opposite season; "" for
// an unknown code.
func SeasonName(code string, southern bool) string {
	names := map[string]string{"DJF": "winter", "MAM": "spring", "JJA": "summer", "SON": "autumn"}
	if southern {
		names = map[string]string{"DJF": "summer", "MAM": "autumn", "JJA": "winter", "SON": "spring"}
	}
	return names[code]
}

// Season returns the meteorological season code (DJF, MAM, JJA, SON) of a
// month and the year it belongs to: December counts with the following
// year's DJF (METHODS §8, common convention).
func Season(t time.Time) (code string, year int) {
	y := t.Year()
	switch t.Month() {
	case time.December:
		return "DJF", y + 1
	case time.January, time.February:
		return "DJF", y
	case time.March, time.April, time.May:
		return "MAM", y
	case time.June, time.July, time.August:
		return "JJA", y
	}
	return "SON", y
}

// PartRows collects the rows of one partition's tables, appended sounding
// by sounding so that nothing is copied again before writing. Each
// registered table (tables.go) names the field that holds its rows, so
// writing a partition (Writer) and collecting rows in memory (RowSet.Add)
// follow the registry. AppendSounding fills all but Soundings and
// Afternoon, which the caller completes (hashes, duplicates, pairing).
type PartRows struct {
	Soundings     []SoundingRow
	Levels        LevelAppender
	Inversions    []InversionRow
	MixedLayers   []MixedLayerRow
	MixingHeights []MixingHeightRow
	Afternoon     []AfternoonRow
	QCFindings    []QCFindingRow
	Descents      DescentRows
}

// Writer returns the rows of the registered table called table, ready to
// be written; an unregistered table, or one whose registry entry names no
// rows, or whose levels collector cannot write, is an error.
func (p *PartRows) Writer(table string) (Writer, error) {
	t, ok := LookupTable(table)
	if !ok || t.rows == nil {
		return nil, fmt.Errorf("no rows collected for table %s", table)
	}
	w := t.rows(p)
	if w == nil {
		return nil, fmt.Errorf("no rows collected for table %s", table)
	}
	return w, nil
}

// LevelAppender receives level rows: a *LevelColumns fills them into the
// columns of the levels file (appendLevelRows), a *Rows[LevelRow] collects
// them for writing, a *RowSlice[LevelRow] as structs.
type LevelAppender interface{ Append(LevelRow) }

// RowSlice collects rows as a slice of structs.
type RowSlice[T any] []T

// Append adds one row.
func (s *RowSlice[T]) Append(row T) { *s = append(*s, row) }

// Len returns the number of rows.
func (s *RowSlice[T]) Len() int { return len(*s) }

// WriteFile writes the rows as the file at path of the named table.
func (s *RowSlice[T]) WriteFile(path, table string, sync bool) error {
	return WriteFile(path, table, []T(*s), sync)
}

// AppendSounding appends the rows of the levels, qc_findings, inversions,
// mixed_layers and mixing_heights tables of sounding s (with its QC report
// rep and its analysis res) to out and returns its soundings-table row
// (without SoundingHash and the duplicate fields, which the caller knows).
// The levels table keeps the values as observed, with their QC flags. res
// is padded to one value per level when the analysis refused the sounding
// early.
func AppendSounding(out *PartRows, s *sounding.Sounding, rep qc.Report, res *analyze.Result) SoundingRow {
	padPerLevel(res, len(s.Levels))
	season, sy := Season(s.NominalTime)
	row := SoundingRow{
		StationID:      s.StationID,
		StationName:    s.StationName,
		LaunchTime:     s.LaunchTime.UTC(),
		LaunchKnown:    s.LaunchTimeReported,
		NominalTime:    s.NominalTime.UTC(),
		NominalHour:    int32(s.NominalTime.Hour()),
		HourInferred:   s.NominalHourInferred,
		Year:           int32(s.NominalTime.Year()),
		Month:          int32(s.NominalTime.Month()),
		Season:         season,
		SeasonYear:     int32(sy),
		LatitudeDeg:    s.LatitudeDeg,
		LongitudeDeg:   s.LongitudeDeg,
		ElevationM:     s.ElevationM,
		SourceFile:     s.Source.File,
		SourceMember:   s.Source.Member,
		SourceLine:     int64(s.Source.Line),
		SourceFormat:   s.Source.Format,
		DeclaredLevels: int32(s.DeclaredLevels),
		LevelCount:     int32(len(s.Levels)),
		AnalysisStatus: string(res.Status),
		QCStatus:       string(rep.Status),
		ConstantSet:    res.ConstantSet,

		SurfacePressureHPa: math.NaN(), SurfaceTemperatureC: math.NaN(), SurfaceDewpointC: math.NaN(),
		SurfaceDerived: res.SurfacePressureDerived, LowestLevelAGLM: res.LowestLevelAGLM,
		SurfaceThetaK: math.NaN(), SurfaceWindSpeedMS: res.SurfaceWindMS,

		SunElevationDeg: res.SunElevationDeg,
		LocalSolarTimeH: res.LocalSolarTimeH,
		SunClass:        string(res.SunClass),

		SBITopAGLM: math.NaN(), SBITopPressHPa: math.NaN(), SBIStrengthK: math.NaN(), SBIGradient: math.NaN(),
		InversionCount: int32(len(res.Inversions)),
		EIBaseAGLM:     math.NaN(), EITopAGLM: math.NaN(), EIStrengthK: math.NaN(),

		MixedBaseAGLM: res.MixedLayer.BaseAGLM, MixedTopAGLM: res.MixedLayer.TopAGLM,
		MixedThetaK: res.MixedLayer.ThetaK, MixedMixingRatio: res.MixedLayer.MixingRatioKgKg * gPerKg,
		MixedLevels:    int32(res.MixedLayer.Levels),
		ParcelMHM:      res.Parcel.HeightAGLM,
		ParcelMHStatus: string(res.Parcel.Status),

		ConsensusMHM:     res.MixingHeightConsensus.HeightAGLM,
		ConsensusStatus:  string(res.MixingHeightConsensus.Status),
		ConsensusSpreadM: res.MixingHeightConsensus.SpreadM,
		ConsensusMethods: int32(res.MixingHeightConsensus.OK),
		Unresolved:       res.MixingHeightConsensus.Unresolved,
		LiuLiangRegime:   string(res.LiuLiangRegime),
		BLRegime:         string(res.Regime),
		ResidualTopAGLM:  res.ResidualTopAGLM,

		TransportWindMS:  res.Ventilation.TransportWindMS,
		TransportWindDef: string(res.Ventilation.TransportWind),
		VentilationM2S:   res.Ventilation.IndexM2S,
		VentilationKtFt:  res.Ventilation.IndexKtFt,
		VentilationCat:   res.Ventilation.Category,
		VentilationTable: res.Ventilation.Table,
		VentilationMH:    res.Ventilation.HeightMethod,

		HeatDeficitMJ:   res.HeatDeficit.JPerM2 / 1e6,
		HeatDeficitRef:  res.HeatDeficit.Reference,
		HeatDeficitTopM: res.HeatDeficit.TopAGLM,
		StableFraction:  res.StableFraction,
	}
	if !math.IsNaN(res.StableFraction) {
		deep := res.DeepStable
		row.DeepStable = &deep
	}
	if i := res.SurfaceIndex; i >= 0 {
		l := s.Levels[i]
		row.SurfacePressureHPa = hPa(res.SurfacePressurePa)
		row.SurfaceTemperatureC = degC(l.TemperatureK)
		row.SurfaceDewpointC = degC(l.DewpointK)
		row.SurfaceThetaK = res.ThetaK[i]
	}
	if res.Status == analyze.StatusOK {
		present := res.SBI.Present
		row.SBIPresent = &present
		if present {
			row.SBITopAGLM = res.SBI.TopAGLM
			row.SBITopPressHPa = hPa(res.SBI.TopPressurePa)
			row.SBIStrengthK = res.SBI.StrengthK
			row.SBIGradient = res.SBI.GradientKPerKm()
			row.SBIClass = string(res.SBI.Class)
		}
		if ei := res.LowestElevated; ei.Present {
			row.EIBaseAGLM, row.EITopAGLM, row.EIStrengthK, row.EIClass = ei.BaseAGLM, ei.TopAGLM, ei.StrengthK, string(ei.Class)
		}
	}

	bad, suspect, corrected := rep.Counts()
	row.QCBad, row.QCSuspect, row.QCCorrected = int32(bad), int32(suspect), int32(corrected)
	appendLevelRows(out.Levels, s, rep, res, row.LaunchTime, row.Year)
	out.QCFindings = appendFindingRows(out.QCFindings, s, rep, row.LaunchTime, row.Year)
	for i, v := range res.Inversions {
		out.Inversions = append(out.Inversions, InversionRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Index: int32(i),
			SurfaceBased: v.SurfaceBased, BaseAGLM: v.BaseAGLM, TopAGLM: v.TopAGLM,
			BasePressHPa: hPa(v.BasePressurePa), TopPressHPa: hPa(v.TopPressurePa),
			DepthM: v.DepthM(), StrengthK: v.StrengthK, GradientKPerKm: v.GradientKPerKm(),
			ThetaDeltaK: v.ThetaDeltaK, DPDDeltaK: v.DewpointDepressionDeltaK, RHDeltaPct: v.RelHumidityDeltaPct,
			WDeltaGKg: v.MixingRatioDeltaKgKg * gPerKg, TurningDeg: v.WindTurningDeg, Levels: int32(v.Levels),
			TopAtCeiling: v.TopAtCeiling, Class: string(v.Class),
		})
	}
	for i, m := range res.MixedLayers {
		out.MixedLayers = append(out.MixedLayers, MixedLayerRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Index: int32(i),
			BaseAGLM: m.BaseAGLM, TopAGLM: m.TopAGLM, BasePress: hPa(m.BasePressurePa), TopPress: hPa(m.TopPressurePa),
			ThetaK: m.ThetaK, MixingRatio: m.MixingRatioKgKg * gPerKg, ThetaRange: m.ThetaRangeK,
			ThetaVRange: m.ThetaVRangeK, WRange: m.MixingRatioRangeKgKg * gPerKg, Levels: int32(m.Levels),
			SuperadTop: m.SuperadiabaticTopAGLM,
		})
	}
	for _, h := range res.MixingHeights {
		out.MixingHeights = append(out.MixingHeights, MixingHeightRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Method: h.Method,
			HeightAGLM: h.HeightAGLM, Status: string(h.Status), Note: h.Note, LevelSpacingM: h.LevelSpacingM, Unresolved: h.Unresolved,
		})
	}
	return row
}

// appendLevelRows appends the level rows of sounding s (with its QC report
// and analysis) to levels: straight into the columns of a *LevelColumns,
// as LevelRow structs (levelRow) to any other collector.
func appendLevelRows(levels LevelAppender, s *sounding.Sounding, rep qc.Report, res *analyze.Result, launch time.Time, year int32) {
	if c, ok := levels.(*LevelColumns); ok {
		c.appendLevels(s, rep, res, launch, year)
		return
	}
	for i := range s.Levels {
		levels.Append(levelRow(s, rep, res, launch, year, i))
	}
}

// appendFindingRows appends the QC findings of sounding s to findings.
func appendFindingRows(findings []QCFindingRow, s *sounding.Sounding, rep qc.Report, launch time.Time, year int32) []QCFindingRow {
	for _, f := range rep.Findings {
		p := math.NaN()
		if f.Level >= 0 && f.Level < len(s.Levels) {
			p = hPa(s.Levels[f.Level].PressurePa)
		}
		findings = append(findings, QCFindingRow{
			StationID: s.StationID, LaunchTime: launch, Year: year, Index: int32(f.Level),
			PressureHPa: p, Variable: f.VariableName(), Check: string(f.Check), Severity: f.Severity.String(),
			Value: qc.DisplayValue(f.Var, f.Value), Corrected: qc.DisplayValue(f.Var, f.NewValue), Message: f.Message,
		})
	}
	return findings
}

// DescentRows collects the rows of the descent tables of a partition.
type DescentRows struct {
	Descents   []DescentRow
	Levels     RowSlice[LevelRow]
	QCFindings []QCFindingRow
}

// AppendDescent appends the rows of descent s (with its QC report rep and
// the per-level derivations of its analysis res: heights, potential
// temperature, mixing ratio) to out and returns its descents-table row
// (without SoundingHash and Duplicates, which the caller knows). Only the
// per-level values of res are used; its boundary-layer diagnostics do not
// apply to a descent (see DescentRow).
func AppendDescent(out *DescentRows, s *sounding.Sounding, rep qc.Report, res *analyze.Result) DescentRow {
	padPerLevel(res, len(s.Levels))
	bad, suspect, corrected := rep.Counts()
	row := DescentRow{
		StationID: s.StationID, LaunchTime: s.LaunchTime.UTC(), Year: int32(s.NominalTime.Year()),
		StartLatDeg: s.LatitudeDeg, StartLonDeg: s.LongitudeDeg,
		SourceFile: s.Source.File, SourceMember: s.Source.Member, SourceFormat: s.Source.Format,
		LevelCount: int32(len(s.Levels)), QCStatus: string(rep.Status),
		QCBad: int32(bad), QCSuspect: int32(suspect), QCCorrected: int32(corrected), ConstantSet: res.ConstantSet,
	}
	appendLevelRows(&out.Levels, s, rep, res, row.LaunchTime, row.Year)
	out.QCFindings = appendFindingRows(out.QCFindings, s, rep, row.LaunchTime, row.Year)
	out.Descents = append(out.Descents, row)
	return row
}

// AfternoonRowOf returns the afternoon_mixing row of estimate e, whose
// morning sounding has the soundings-table row m.
func AfternoonRowOf(m SoundingRow, e analyze.AfternoonEstimate) AfternoonRow {
	return AfternoonRow{
		StationID: m.StationID, Year: m.Year, LocalDate: e.LocalDate, MorningLaunch: m.LaunchTime,
		TmaxC: degC(e.TmaxK), TmaxSource: string(e.TmaxSource), HeightAGLM: e.MixingHeight.HeightAGLM,
		Status: string(e.MixingHeight.Status), Note: e.MixingHeight.Note,
	}
}

// padPerLevel makes the per-level slices as long as the sounding's levels
// (the analysis leaves them empty when it refuses a sounding early).
func padPerLevel(r *analyze.Result, n int) {
	pad := func(x []float64) []float64 {
		for len(x) < n {
			x = append(x, math.NaN())
		}
		return x
	}
	r.HeightM, r.HeightAGLM, r.ThetaK = pad(r.HeightM), pad(r.HeightAGLM), pad(r.ThetaK)
	r.ThetaVK, r.MixingRatioKgKg = pad(r.ThetaVK), pad(r.MixingRatioKgKg)
	for len(r.HeightDerived) < n {
		r.HeightDerived = append(r.HeightDerived, false)
	}
}

// RowSet holds rows of the store's tables in memory: what an ingest of the
// same inputs writes, without the store (engine.Analyse).
type RowSet struct {
	Soundings     []SoundingRow
	Levels        []LevelRow
	Inversions    []InversionRow
	MixedLayers   []MixedLayerRow
	MixingHeights []MixingHeightRow
	Afternoon     []AfternoonRow
	QCFindings    []QCFindingRow

	Descents          []DescentRow
	DescentLevels     []LevelRow
	DescentQCFindings []QCFindingRow
}

// Add appends the rows of one partition (its levels collected in a
// *RowSlice[LevelRow]).
func (r *RowSet) Add(p *PartRows) {
	r.Soundings = append(r.Soundings, p.Soundings...)
	if l, ok := p.Levels.(*RowSlice[LevelRow]); ok {
		r.Levels = append(r.Levels, *l...)
	}
	r.Inversions = append(r.Inversions, p.Inversions...)
	r.MixedLayers = append(r.MixedLayers, p.MixedLayers...)
	r.MixingHeights = append(r.MixingHeights, p.MixingHeights...)
	r.Afternoon = append(r.Afternoon, p.Afternoon...)
	r.QCFindings = append(r.QCFindings, p.QCFindings...)
	r.Descents = append(r.Descents, p.Descents.Descents...)
	r.DescentLevels = append(r.DescentLevels, p.Descents.Levels...)
	r.DescentQCFindings = append(r.DescentQCFindings, p.Descents.QCFindings...)
}
