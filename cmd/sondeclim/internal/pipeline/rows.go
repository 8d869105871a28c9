package pipeline

import (
	"math"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest/sounding"
	"github.com/sondeclim/sondeclim/schema"
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

// analyzeOne runs the analysis of one sounding and turns it into rows.
func analyzeOne(s *sounding.Sounding, cfg analyze.Config, _ map[string]StationInfo) result {
	res := analyze.Analyze(s, cfg)
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
		ConstantSet:    res.ConstantSet,

		SurfacePressureHPa: math.NaN(), SurfaceTemperatureC: math.NaN(), SurfaceDewpointC: math.NaN(),
		SurfaceThetaK: math.NaN(), SurfaceWindSpeedMS: math.NaN(),

		SBITopAGLM: math.NaN(), SBITopPressHPa: math.NaN(), SBIStrengthK: math.NaN(),
		MixedBaseAGLM: res.MixedLayer.BaseAGLM, MixedTopAGLM: res.MixedLayer.TopAGLM,
		MixedThetaK: res.MixedLayer.ThetaK, MixedMixingRatio: res.MixedLayer.MixingRatioKgKg * gPerKg,
		MixedLevels:    int32(res.MixedLayer.Levels),
		ParcelMHM:      res.Parcel.HeightAGLM,
		ParcelMHStatus: res.Parcel.Status,
	}
	if i := res.SurfaceIndex; i >= 0 {
		l := s.Levels[i]
		row.SurfacePressureHPa = hPa(l.PressurePa)
		row.SurfaceTemperatureC = degC(l.TemperatureK)
		row.SurfaceDewpointC = degC(l.DewpointK)
		row.SurfaceThetaK = res.ThetaK[i]
		row.SurfaceWindSpeedMS = l.WindSpeedMS
	}
	if res.Status == analyze.StatusOK {
		present := res.SBI.Present
		row.SBIPresent = &present
		if present {
			row.SBITopAGLM = res.SBI.TopAGLM
			row.SBITopPressHPa = hPa(res.SBI.TopPressurePa)
			row.SBIStrengthK = res.SBI.StrengthK
		}
	}

	levels := make([]schema.LevelRow, len(s.Levels))
	for i, l := range s.Levels {
		levels[i] = schema.LevelRow{
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
		}
	}
	return result{sounding: row, levels: levels, status: res.Status}
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
