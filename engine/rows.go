package engine

import (
	"math"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/sounding"
)

// Display-unit conversions at the output edge.
const (
	paPerHPa = 100.0
	kelvin0C = 273.15
	gPerKg   = 1000.0
)

func hPa(pa float64) float64 { return pa / paPerHPa }
func degC(k float64) float64 { return k - kelvin0C }

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

// result is one analysed sounding: its soundings-table row and what the
// afternoon pairing needs. Its other rows go to a partRows.
type result struct {
	sounding schema.SoundingRow
	status   string
	analysis analyze.Result
}

// partRows collects the rows of one station-year's tables other than
// soundings and afternoon_mixing, appended sounding by sounding so that
// nothing is copied again before writing.
type partRows struct {
	levels   *schema.Rows[schema.LevelRow]
	inv      []schema.InversionRow
	mixed    []schema.MixedLayerRow
	heights  []schema.MixingHeightRow
	findings []schema.QCFindingRow
}

// analyzeOne runs the analysis of one sounding, using only the values its
// quality control allows, and turns it into rows (appended to out). The
// levels table keeps the values as observed, with their QC flags.
func analyzeOne(s *sounding.Sounding, rep qc.Report, cfg analyze.Config, useSuspect bool, out *partRows) result {
	var res analyze.Result
	if rep.Usable() {
		res = analyze.Analyze(qc.Apply(s, rep, useSuspect), cfg)
	} else {
		// Excluded by QC: still written, counted as attempted but not
		// valid, with the QC reason as its analysis status.
		res = analyze.Analyze(nil, cfg)
		res.Status = "qc_" + rep.Status
	}
	padPerLevel(&res, len(s.Levels))
	season, sy := Season(s.NominalTime)
	row := schema.SoundingRow{
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
		AnalysisStatus: res.Status,
		QCStatus:       rep.Status,
		ConstantSet:    res.ConstantSet,

		SurfacePressureHPa: math.NaN(), SurfaceTemperatureC: math.NaN(), SurfaceDewpointC: math.NaN(),
		SurfaceThetaK: math.NaN(), SurfaceWindSpeedMS: res.SurfaceWindMS,

		SunElevationDeg: res.SunElevationDeg,
		LocalSolarTimeH: res.LocalSolarTimeH,
		SunClass:        res.SunClass,

		SBITopAGLM: math.NaN(), SBITopPressHPa: math.NaN(), SBIStrengthK: math.NaN(), SBIGradient: math.NaN(),
		InversionCount: int32(len(res.Inversions)),
		EIBaseAGLM:     math.NaN(), EITopAGLM: math.NaN(), EIStrengthK: math.NaN(),

		MixedBaseAGLM: res.MixedLayer.BaseAGLM, MixedTopAGLM: res.MixedLayer.TopAGLM,
		MixedThetaK: res.MixedLayer.ThetaK, MixedMixingRatio: res.MixedLayer.MixingRatioKgKg * gPerKg,
		MixedLevels:    int32(res.MixedLayer.Levels),
		ParcelMHM:      res.Parcel.HeightAGLM,
		ParcelMHStatus: res.Parcel.Status,

		ConsensusMHM:     res.MixingHeightConsensus.HeightAGLM,
		ConsensusStatus:  res.MixingHeightConsensus.Status,
		ConsensusSpreadM: res.MixingHeightConsensus.SpreadM,
		ConsensusMethods: int32(res.MixingHeightConsensus.OK),
		Unresolved:       res.MixingHeightConsensus.Unresolved,
		LiuLiangRegime:   res.LiuLiangRegime,

		TransportWindMS:  res.Ventilation.TransportWindMS,
		TransportWindDef: res.Ventilation.TransportWind,
		VentilationM2S:   res.Ventilation.IndexM2S,
		VentilationKtFt:  res.Ventilation.IndexKtFt,
		VentilationCat:   res.Ventilation.Category,
		VentilationTable: res.Ventilation.Table,
		VentilationMH:    res.Ventilation.HeightMethod,
	}
	if i := res.SurfaceIndex; i >= 0 {
		l := s.Levels[i]
		row.SurfacePressureHPa = hPa(l.PressurePa)
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
			row.SBIClass = res.SBI.Class
		}
		if ei := res.LowestElevated; ei.Present {
			row.EIBaseAGLM, row.EITopAGLM, row.EIStrengthK, row.EIClass = ei.BaseAGLM, ei.TopAGLM, ei.StrengthK, ei.Class
		}
	}

	bad, suspect, corrected := rep.Counts()
	row.QCBad, row.QCSuspect, row.QCCorrected = int32(bad), int32(suspect), int32(corrected)
	flag := func(i int, v sounding.Var) string {
		if i < len(rep.Flags) {
			return rep.Flags[i][v].String()
		}
		return ""
	}
	for i, l := range s.Levels {
		out.levels.Append(schema.LevelRow{
			StationID:         s.StationID,
			LaunchTime:        row.LaunchTime,
			Year:              row.Year,
			Index:             int32(i),
			Kind:              l.Kind.String(),
			SourceLine:        int64(l.Line),
			ElapsedS:          l.ElapsedS,
			PressureHPa:       hPa(l.PressurePa),
			HeightM:           res.HeightM[i],
			HeightDerived:     res.HeightDerived[i],
			HeightAGLM:        res.HeightAGLM[i],
			TemperatureC:      degC(l.TemperatureK),
			DewpointC:         degC(l.DewpointK),
			RelHumidityPct:    l.RelHumidityPct,
			WindDirDeg:        l.WindDirectionDeg,
			WindSpeedMS:       l.WindSpeedMS,
			ThetaK:            res.ThetaK[i],
			MixingRatioGKg:    res.MixingRatioKgKg[i] * gPerKg,
			TemperatureStatus: l.Status[sounding.VarTemperature].String(),
			HeightStatus:      heightStatus(l, res.HeightDerived[i]),
			HumidityStatus:    l.Status[sounding.VarDewpointDepression].String(),
			PressureQC:        flag(i, sounding.VarPressure),
			HeightQC:          flag(i, sounding.VarHeight),
			TemperatureQC:     flag(i, sounding.VarTemperature),
			HumidityQC:        flag(i, sounding.VarDewpointDepression),
			WindQC:            flag(i, sounding.VarWindSpeed),
		})
	}
	for _, f := range rep.Findings {
		p := math.NaN()
		if f.Level >= 0 && f.Level < len(s.Levels) {
			p = hPa(s.Levels[f.Level].PressurePa)
		}
		out.findings = append(out.findings, schema.QCFindingRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Index: int32(f.Level),
			PressureHPa: p, Variable: f.VariableName(), Check: f.Check, Severity: f.Severity.String(),
			Value: qc.DisplayValue(f.Var, f.Value), Corrected: qc.DisplayValue(f.Var, f.NewValue), Message: f.Message,
		})
	}
	for i, v := range res.Inversions {
		out.inv = append(out.inv, schema.InversionRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Index: int32(i),
			SurfaceBased: v.SurfaceBased, BaseAGLM: v.BaseAGLM, TopAGLM: v.TopAGLM,
			BasePressHPa: hPa(v.BasePressurePa), TopPressHPa: hPa(v.TopPressurePa),
			DepthM: v.DepthM(), StrengthK: v.StrengthK, GradientKPerKm: v.GradientKPerKm(),
			ThetaDeltaK: v.ThetaDeltaK, DPDDeltaK: v.DewpointDepressionDeltaK, RHDeltaPct: v.RelHumidityDeltaPct,
			WDeltaGKg: v.MixingRatioDeltaKgKg * gPerKg, TurningDeg: v.WindTurningDeg, Levels: int32(v.Levels),
			TopAtCeiling: v.TopAtCeiling, Class: v.Class,
		})
	}
	for i, m := range res.MixedLayers {
		out.mixed = append(out.mixed, schema.MixedLayerRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Index: int32(i),
			BaseAGLM: m.BaseAGLM, TopAGLM: m.TopAGLM, BasePress: hPa(m.BasePressurePa), TopPress: hPa(m.TopPressurePa),
			ThetaK: m.ThetaK, MixingRatio: m.MixingRatioKgKg * gPerKg, ThetaRange: m.ThetaRangeK,
			ThetaVRange: m.ThetaVRangeK, WRange: m.MixingRatioRangeKgKg * gPerKg, Levels: int32(m.Levels),
			SuperadTop: m.SuperadiabaticTopAGLM,
		})
	}
	for _, h := range res.MixingHeights {
		out.heights = append(out.heights, schema.MixingHeightRow{
			StationID: s.StationID, LaunchTime: row.LaunchTime, Year: row.Year, Method: h.Method,
			HeightAGLM: h.HeightAGLM, Status: h.Status, Note: h.Note, LevelSpacingM: h.LevelSpacingM, Unresolved: h.Unresolved,
		})
	}
	return result{sounding: row, status: res.Status, analysis: res}
}

// afternoonRows pairs the morning soundings of one station-year with the
// day's maximum temperature (a daily-maxima file when given, else the same
// local day's afternoon sounding) and computes the afternoon mixing height
// (Holzworth). The input is in launch-time order.
func afternoonRows(results []result, maxima analyze.DailyMaxima, cfg analyze.PairingConfig) []schema.AfternoonRow {
	days := make([]analyze.DaySounding, len(results))
	for i := range results {
		r := &results[i]
		days[i] = analyze.DaySounding{StationID: r.sounding.StationID, LaunchTime: r.sounding.LaunchTime,
			LongitudeDeg: r.sounding.LongitudeDeg, Profile: r.analysis.Profile}
		if r.status != analyze.StatusOK {
			days[i].LongitudeDeg = math.NaN() // not analysable: neither morning nor afternoon
		}
	}
	var rows []schema.AfternoonRow
	for _, e := range analyze.PairAfternoon(days, maxima, cfg) {
		m := results[e.Morning].sounding
		rows = append(rows, schema.AfternoonRow{
			StationID: m.StationID, Year: m.Year, LocalDate: e.LocalDate, MorningLaunch: m.LaunchTime,
			TmaxC: degC(e.TmaxK), TmaxSource: e.TmaxSource, HeightAGLM: e.MixingHeight.HeightAGLM,
			Status: e.MixingHeight.Status, Note: e.MixingHeight.Note,
		})
	}
	return rows
}

func heightStatus(l sounding.Level, derived bool) string {
	if derived {
		return sounding.Derived.String()
	}
	return l.Status[sounding.VarHeight].String()
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
