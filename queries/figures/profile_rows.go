package figures

import (
	"fmt"
	"math"
	"time"

	"github.com/sondeclim/sondeclim/schema"
)

// ProfileFromRows is LoadProfile over rows held in memory (an analysis of
// sounding files without a store, engine.Analyse): the sounding of station
// whose launch or nominal time is nearest to at, no more than within away,
// ties to the earlier launch, with the same values LoadProfile reads from
// a store of the same rows. When none qualifies the error wraps
// ErrNoSounding.
func ProfileFromRows(rs *schema.RowSet, station string, at time.Time, within time.Duration) (*Profile, error) {
	best, bestD := -1, 0.0
	for i, s := range rs.Soundings {
		if s.StationID != station {
			continue
		}
		// The distance in seconds, as profile_pick.sql computes it.
		d := math.Min(math.Abs(s.LaunchTime.Sub(at).Seconds()), math.Abs(s.NominalTime.Sub(at).Seconds()))
		if d > within.Seconds() {
			continue
		}
		if best < 0 || d < bestD || d == bestD && s.LaunchTime.Before(rs.Soundings[best].LaunchTime) {
			best, bestD = i, d
		}
	}
	if best < 0 {
		return nil, fmt.Errorf("%w of station %s within %v of %s", ErrNoSounding, station, within, at.UTC().Format(time.RFC3339))
	}
	s := rs.Soundings[best]
	p := &Profile{
		StationID: s.StationID, StationName: s.StationName, LaunchTime: s.LaunchTime.UTC(), NominalTime: s.NominalTime.UTC(),
		NominalHour: int(s.NominalHour), LatitudeDeg: s.LatitudeDeg, LongitudeDeg: s.LongitudeDeg, ElevationM: s.ElevationM,
		SourceFile: s.SourceFile, SourceLine: s.SourceLine, SourceFormat: s.SourceFormat, LevelCount: int(s.LevelCount),
		QCStatus: s.QCStatus, AnalysisStatus: s.AnalysisStatus, SunClass: s.SunClass, SunElevation: s.SunElevationDeg,
		Regime: s.LiuLiangRegime, BLRegime: s.BLRegime, SurfacePressureHPa: s.SurfacePressureHPa,
		SurfacePressureDerived: s.SurfaceDerived, LowestLevelAGLM: s.LowestLevelAGLM,
		SurfaceTemperatureC: s.SurfaceTemperatureC, SurfaceDewpointC: s.SurfaceDewpointC, SurfaceThetaK: s.SurfaceThetaK,
		ResidualTopAGLM: s.ResidualTopAGLM,
		Consensus: MethodHeight{Method: Consensus, HeightAGLM: s.ConsensusMHM, Status: s.ConsensusStatus,
			LevelSpacingM: math.NaN(), Unresolved: s.Unresolved},
		SpreadM: s.ConsensusSpreadM, MethodsOK: int(s.ConsensusMethods), Unresolved: s.Unresolved,
		TransportWindMS: s.TransportWindMS, TransportWindMethod: s.TransportWindDef, VentilationM2S: s.VentilationM2S,
		VentilationKtFt: s.VentilationKtFt, VentilationCategory: s.VentilationCat, VentilationTable: s.VentilationTable,
		VentilationHeightMethod: s.VentilationMH,
	}
	same := func(id string, t time.Time) bool { return id == s.StationID && t.Equal(s.LaunchTime) }
	// Rows are in level, layer and method order already (as the store's
	// queries sort them: level_index, inversion_index, layer_index and the
	// method registry's order).
	for _, l := range rs.Levels {
		if same(l.StationID, l.LaunchTime) {
			p.Levels = append(p.Levels, Level{Index: int(l.Index), Kind: l.Kind, PressureHPa: l.PressureHPa,
				HeightM: l.HeightM, HeightDerived: l.HeightDerived, HeightAGLM: l.HeightAGLM, TemperatureC: l.TemperatureC,
				DewpointC: l.DewpointC, ThetaK: l.ThetaK, MixingRatioGKg: l.MixingRatioGKg, WindDirDeg: l.WindDirDeg,
				WindSpeedMS: l.WindSpeedMS, TemperatureStatus: l.TemperatureStatus, HeightStatus: l.HeightStatus,
				HumidityStatus: l.HumidityStatus, PressureQC: l.PressureQC, HeightQC: l.HeightQC,
				TemperatureQC: l.TemperatureQC, HumidityQC: l.HumidityQC, WindQC: l.WindQC})
		}
	}
	for _, v := range rs.Inversions {
		if same(v.StationID, v.LaunchTime) {
			p.Inversions = append(p.Inversions, Inversion{Index: int(v.Index), SurfaceBased: v.SurfaceBased,
				BaseAGLM: v.BaseAGLM, TopAGLM: v.TopAGLM, BasePressureHPa: v.BasePressHPa, TopPressureHPa: v.TopPressHPa,
				DepthM: v.DepthM, StrengthK: v.StrengthK, GradientKPerKm: v.GradientKPerKm, TopAtCeiling: v.TopAtCeiling,
				Class: v.Class})
		}
	}
	for _, m := range rs.MixedLayers {
		if same(m.StationID, m.LaunchTime) {
			p.MixedLayers = append(p.MixedLayers, MixedLayer{Index: int(m.Index), BaseAGLM: m.BaseAGLM, TopAGLM: m.TopAGLM,
				BasePressureHPa: m.BasePress, TopPressureHPa: m.TopPress, ThetaK: m.ThetaK, MixingRatioGKg: m.MixingRatio,
				Levels: int(m.Levels)})
		}
	}
	for _, h := range rs.MixingHeights {
		if same(h.StationID, h.LaunchTime) {
			p.Heights = append(p.Heights, MethodHeight{Method: h.Method, HeightAGLM: h.HeightAGLM, Status: h.Status,
				Note: h.Note, LevelSpacingM: h.LevelSpacingM, Unresolved: h.Unresolved})
		}
	}
	return p, nil
}
