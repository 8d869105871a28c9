package analyze

import (
	"math"

	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// Status is the analysis status of a sounding (the column
// soundings.analysis_status). Anything other than StatusOK means the
// sounding was attempted but could not be analysed; it must be counted,
// not dropped.
type Status string

// Analysis statuses.
const (
	StatusOK             Status = "ok"
	StatusInvalidConfig  Status = "invalid_config"   // the Config fails validation (e.g. a zero Config)
	StatusNoLevels       Status = "no_levels"        // nil sounding or no levels at all
	StatusNoThermoLevels Status = "no_thermo_levels" // no level has pressure, temperature and a height
	StatusNoSurfaceLevel Status = "no_surface_level" // the lowest such level is more than MaxSurfaceGapM above the station
	StatusTooFewLevels   Status = "too_few_levels"   // fewer than MinLevels usable levels below CoverageTopPa
)

// Statuses returns the analysis statuses in the order above.
func Statuses() []Status {
	return []Status{StatusOK, StatusInvalidConfig, StatusNoLevels, StatusNoThermoLevels, StatusNoSurfaceLevel, StatusTooFewLevels}
}

// Result holds the diagnostics of one sounding. Per-level slices are
// aligned 1:1 with the sounding's Levels (same index) and hold NaN where a
// value cannot be computed; they are filled as far as possible even when
// Status is not StatusOK. The slices of a Result from an Analyzer are
// overwritten by its next analysis (Analyzer.Analyze), except Profile's.
type Result struct {
	Status      Status
	ConstantSet string // thermo.Constants.ID() of the set used
	SatVap      string // saturation vapour pressure formula used

	HeightM         []float64 // gpm above mean sea level, reported or filled
	HeightDerived   []bool    // true where HeightM was filled hypsometrically
	HeightAGLM      []float64 // gpm above ground
	ThetaK          []float64 // K, potential temperature
	ThetaVK         []float64 // K, virtual potential temperature (NaN without humidity)
	MixingRatioKgKg []float64 // kg/kg, from dewpoint and pressure
	// StandardAnchor: no level had a height; see Heights.StandardAnchor.
	StandardAnchor bool

	// SurfaceIndex is the index in Levels of the surface level of the
	// thermodynamic profile (its lowest level), −1 when there is none.
	SurfaceIndex int
	// LowestLevelAGLM is the height of that level above ground, m: 0 when
	// the sounding's own surface line starts the profile, more when the
	// surface line carries no pressure or temperature (wind-only) and the
	// profile starts at the lowest level above it. NaN when none.
	LowestLevelAGLM float64
	// SurfacePressurePa is the pressure at the ground, Pa: the surface
	// level's own when it starts the profile; otherwise, when the station
	// elevation is known, derived hypsometrically from the lowest level
	// (SurfacePressureDerived, see surfacePressure). NaN when unknown.
	SurfacePressurePa      float64
	SurfacePressureDerived bool
	// CeilingAGLM is the search ceiling actually used, m AGL.
	CeilingAGLM float64

	SBI        Inversion  // surface-based inversion
	MixedLayer MixedLayer // lowest well-mixed layer
	Parcel     Parcel     // parcel mixing height from the surface temperature

	// Sun at launch (package sun): geometric solar elevation in degrees,
	// local apparent solar time in hours, and the class (one of
	// sun.Classes; sun.Unknown for a NaN position or no launch
	// time). Set for every sounding, analysable or not.
	SunElevationDeg float64
	LocalSolarTimeH float64
	SunClass        sun.Class

	// SurfaceWindMS is the wind speed at the lowest wind level when it is
	// within MaxSurfaceGapM of the ground, m/s; NaN otherwise.
	SurfaceWindMS float64

	// Inversions lists every inversion layer below the ceiling, lowest
	// first, classified (the SBI, when present, is the first).
	Inversions []Inversion
	// LowestElevated is the lowest elevated inversion (Present false when
	// none).
	LowestElevated Inversion
	// MixedLayers lists every well-mixed layer below the ceiling, lowest
	// first, searched upward from MixedLayer.BaseAGLM; MixedLayer is the
	// first of them when it starts there.
	MixedLayers []MixedLayer

	// MixingHeights holds one entry per registered method (Methods), in
	// registry order, whatever the Status (all undefined when the
	// sounding could not be analysed).
	MixingHeights []MixingHeight
	// MixingHeightConsensus summarises the methods listed in
	// MixingHeightConfig.Consensus.
	MixingHeightConsensus Consensus
	// LiuLiangRegime is RegimeConvective, RegimeNeutral, RegimeStable or "".
	LiuLiangRegime LiuLiangRegime
	// Regime is the boundary-layer regime (BLConvective, BLStable,
	// BLNeutral, or BLUnknown; ClassifyRegime) that chooses the methods of
	// the consensus.
	Regime BLRegime
	// ResidualTopAGLM is the top of the residual layer in the stable and
	// neutral regimes, m AGL (residualTop); NaN otherwise. It is not a
	// mixing height: air between the night's mixing height and this top is
	// left from the previous day and is mixed down when the morning's
	// convection reaches it (fumigation).
	ResidualTopAGLM float64

	Ventilation Ventilation

	// HeatDeficit is the heat deficit from the surface to the configured
	// reference height (HeatDeficit; J m⁻², NaN when the profile does not
	// reach the reference or it lies below ground).
	HeatDeficit HeatDeficitResult
	// StableFraction is the fraction of the lowest StableLayer.DepthM with
	// a lapse rate ≤ StableLayer.MaxLapseKPerKm (Wolyn & McKee 1989), NaN
	// when the profile does not reach that depth; DeepStable is
	// StableFraction ≥ StableLayer.MinFraction.
	StableFraction float64
	DeepStable     bool

	// Profile is the thermodynamic profile kept for the afternoon
	// (Holzworth) mixing height; see AfternoonMixingHeight.
	Profile ParcelProfile
}

// Analyze computes the diagnostics of one sounding with the given
// configuration. It never panics and never modifies s. See the package
// documentation for how levels are selected.
//
// Heights above ground are relative to s.ElevationM when it is known and
// heights are anchored to a reported height, else to the surface level.
// The surface-based inversion is the lowest inversion layer (METHODS §3.2)
// when its base is the surface level. The mixed layer is searched from the
// surface, or from the top of the surface-based inversion. The parcel is
// lifted from the surface level's temperature plus Parcel.ExcessK at the
// surface pressure.
func Analyze(s *sounding.Sounding, cfg Config) Result {
	return analyze(s, cfg, nil)
}

// analyze is Analyze, with the working memory and the configuration's
// labels of a when a is not nil.
func analyze(s *sounding.Sounding, cfg Config, a *Analyzer) Result {
	nan := math.NaN()
	var sc *scratch
	var constantSet, satVap, heatRef string
	if a != nil {
		sc, constantSet, satVap, heatRef = &a.sc, a.constantSet, a.satVap, a.heatRef
	} else {
		constantSet, satVap, heatRef = cfg.Constants.ID(), cfg.SatVap.String(), cfg.HeatDeficit.Label()
	}
	// r is the Analyzer's own when there is one: the method input keeps
	// a pointer to it, which would otherwise move every Result to the heap.
	var r *Result
	if a != nil {
		r = &a.res
	} else {
		r = new(Result)
	}
	*r = Result{Status: StatusOK, ConstantSet: constantSet, SatVap: satVap,
		SurfaceIndex: -1, CeilingAGLM: nan, LowestLevelAGLM: nan, SurfacePressurePa: nan,
		SBI: noInversion(), MixedLayer: noMixedLayer(),
		Parcel:          Parcel{Status: MixingHeightUndefined, HeightAGLM: nan, Theta0K: nan},
		SunElevationDeg: nan, LocalSolarTimeH: nan, SunClass: sun.Unknown, SurfaceWindMS: nan, ResidualTopAGLM: nan,
		LowestElevated:        noInversion(),
		MixingHeightConsensus: ConsensusOf(nil, nil),
		Ventilation: Ventilation{HeightMethod: cfg.Ventilation.HeightMethod, MixingHeightAGLM: nan,
			TransportWind: cfg.Ventilation.TransportWind, TransportWindMS: nan, IndexM2S: nan, IndexKtFt: nan,
			Table: cfg.Ventilation.Table.Name},
		Profile:        ParcelProfile{SurfacePressurePa: nan, SurfaceTemperatureK: nan, CeilingAGLM: nan},
		HeatDeficit:    HeatDeficitResult{Reference: heatRef, TopAGLM: nan, JPerM2: nan},
		StableFraction: nan,
	}
	r.MixingHeights = sc.mixingHeights(len(methods))
	for i, m := range methods {
		r.MixingHeights[i] = undefinedMH(m.Name, "not_analysed")
	}
	if s != nil {
		r.SunElevationDeg = sun.ElevationDeg(s.LaunchTime, s.LatitudeDeg, s.LongitudeDeg)
		if !math.IsNaN(r.SunElevationDeg) {
			r.LocalSolarTimeH = sun.LocalApparentSolarTime(s.LaunchTime, s.LongitudeDeg)
		}
		r.SunClass = cfg.Sun.Classify(r.SunElevationDeg)
	}
	switch {
	case !cfg.valid():
		r.Status = StatusInvalidConfig
		return *r
	case s == nil || len(s.Levels) == 0:
		r.Status = StatusNoLevels
		return *r
	}
	p, t := r.levelValues(s, cfg, sc)
	wp := r.buildWindProfile(s, sc)
	if len(wp.z) > 0 && wp.z[0] <= cfg.MaxSurfaceGapM {
		r.SurfaceWindMS = math.Hypot(wp.u[0], wp.v[0])
	}
	pr := r.buildProfile(s, p, t, wp, sc)
	if len(pr.idx) == 0 {
		r.Status = StatusNoThermoLevels
		return *r
	}
	r.SurfaceIndex = pr.idx[0]
	r.LowestLevelAGLM = pr.z[0]
	r.surfacePressure(s, pr, cfg)
	if !math.IsNaN(s.ElevationM) && !r.StandardAnchor && pr.z[0] > cfg.MaxSurfaceGapM {
		r.Status = StatusNoSurfaceLevel
		return *r
	}
	covered := 0
	for _, pk := range pr.p {
		if pk >= cfg.CoverageTopPa {
			covered++
		}
	}
	if covered < cfg.MinLevels {
		r.Status = StatusTooFewLevels
		return *r
	}
	zc, n := pr.ceiling(cfg)
	r.CeilingAGLM = zc
	r.Profile = ParcelProfile{SurfacePressurePa: pr.p[0], SurfaceTemperatureK: pr.t[0], CeilingAGLM: zc,
		Kappa: cfg.Constants.Kappa, P0Pa: cfg.Constants.P0Pa, HeightAGLM: pr.z, ThetaK: pr.theta}

	r.bulkStability(pr, cfg, heatRef != "")

	spans := findInversionsIn(sc.layerSpans(n), pr.z, pr.t, n, cfg.Inversion, sc)
	mlBase := 0
	if len(spans) > 0 && spans[0].base == 0 {
		mlBase = spans[0].top
	}
	allowSA := !cfg.MixedLayer.SuperadiabaticDayOnly || r.SunClass == sun.Day
	r.MixedLayers, r.MixedLayer = pr.mixedLayersFrom(sc.mixedLayers(), mlBase, n, cfg.MixedLayer, allowSA)
	r.MixedLayers = sc.keepMixedLayers(r.MixedLayers)
	r.classifyInversions(pr, spans, n, cfg, sc)

	c := cfg.Constants
	r.Parcel.Theta0K = thermo.PotentialTemperature(pr.t[0]+cfg.Parcel.ExcessK, pr.p[0], c.Kappa, c.P0Pa)
	r.Parcel.HeightAGLM, r.Parcel.Status = ParcelMixingHeight(pr.z, pr.theta, r.Parcel.Theta0K, zc)
	var in *methodInput
	if a != nil {
		in = &a.in
	}
	r.mixingHeights(pr, n, cfg, in, sc)
	r.ventilation(wp, cfg)
	return *r
}

// bulkStability fills HeatDeficit, StableFraction and DeepStable from the
// whole thermodynamic profile (not limited by the search ceiling).
func (r *Result) bulkStability(pr profile, cfg Config, labelled bool) {
	c := cfg.Constants
	i := pr.idx[0]
	ground := r.HeightM[i] - r.HeightAGLM[i]
	top := cfg.HeatDeficit.topAGL(pr.z, pr.p, ground, labelled)
	r.HeatDeficit.TopAGLM = top
	r.HeatDeficit.JPerM2 = HeatDeficit(pr.z, pr.p, pr.t, pr.theta, top, c.Cpd, c.Rd)
	sl := cfg.StableLayer
	r.StableFraction = StableLayerFraction(pr.z, pr.t, sl.DepthM, sl.MaxLapseKPerKm)
	r.DeepStable = r.StableFraction >= sl.MinFraction
}

// classifyInversions fills Inversions, SBI and LowestElevated.
func (r *Result) classifyInversions(pr profile, spans []layerSpan, n int, cfg Config, sc *scratch) {
	if len(spans) == 0 {
		return
	}
	var tops [8]float64
	ctx := classContext{sunClass: r.SunClass, solarTimeH: r.LocalSolarTimeH, surfaceWindMS: r.SurfaceWindMS,
		mixedLayerTops: tops[:0]}
	for _, m := range r.MixedLayers {
		ctx.mixedLayerTops = append(ctx.mixedLayerTops, m.TopAGLM)
	}
	r.Inversions = sc.inversions(len(spans))
	for i, sp := range spans {
		v := pr.inversionFrom(sp, n, cfg.SatVap)
		v.Class = classify(v, ctx, cfg.Inversion.Classes)
		r.Inversions[i] = v
	}
	if r.Inversions[0].SurfaceBased {
		r.SBI = r.Inversions[0]
	}
	for _, v := range r.Inversions {
		if !v.SurfaceBased {
			r.LowestElevated = v
			break
		}
	}
}

// levelValues fills the per-level slices and returns the levels' pressures
// and temperatures (Inf treated as missing).
func (r *Result) levelValues(s *sounding.Sounding, cfg Config, sc *scratch) (p, t []float64) {
	n := len(s.Levels)
	c := cfg.Constants
	buf := sc.floats(4 * n)
	r.HeightAGLM, r.ThetaK, r.ThetaVK, r.MixingRatioKgKg = buf[:n:n], buf[n:2*n:2*n], buf[2*n:3*n:3*n], buf[3*n:]
	p, t = sc.floats(n), sc.floats(n)
	for i := range s.Levels {
		l := &s.Levels[i]
		p[i], t[i] = finite(l.PressurePa), finite(l.TemperatureK)
		th := thermo.PotentialTemperature(t[i], p[i], c.Kappa, c.P0Pa)
		// Without a dewpoint (about half the levels of real soundings) the
		// mixing ratio is the NaN MixingRatio returns for a NaN vapour
		// pressure, without the saturation formula run on a NaN.
		w := math.NaN()
		if td := finite(l.DewpointK); !math.IsNaN(td) {
			w = thermo.MixingRatio(thermo.VapourPressureFromDewpoint(td, cfg.SatVap), p[i], c.Epsilon)
		}
		r.ThetaK[i], r.MixingRatioKgKg[i] = th, w
		r.ThetaVK[i] = thermo.VirtualPotentialTemperature(th, w, c.Epsilon)
	}
	// The re-anchor points' mismatches (FillHeights' Anchors) are not
	// kept: quality control's hydrostatic check has compared every
	// reported thickness with the hypsometric one already.
	h := fillHeights(s.Levels, s.ElevationM, c, cfg.SatVap, r.MixingRatioKgKg, false, sc)
	r.HeightM, r.HeightDerived, r.StandardAnchor = h.HeightM, h.Derived, h.StandardAnchor
	ground := s.ElevationM
	if math.IsNaN(ground) || h.StandardAnchor {
		ground = math.NaN()
		// The surface of the profile: the highest-pressure level with T and a height.
		best := -1
		for i := range p {
			if p[i] > 0 && t[i] > 0 && !math.IsNaN(r.HeightM[i]) && (best < 0 || p[i] > p[best]) {
				best = i
			}
		}
		if best >= 0 {
			ground = r.HeightM[best]
		}
	}
	for i := range r.HeightAGLM {
		r.HeightAGLM[i] = r.HeightM[i] - ground
	}
	return p, t
}

func finite(v float64) float64 {
	if math.IsInf(v, 0) {
		return math.NaN()
	}
	return v
}

// surfacePressure fills SurfacePressurePa and SurfacePressureDerived. When
// the profile starts at the sounding's surface line, or the ground is not
// known (no station elevation, or heights placed on the standard
// atmosphere), the pressure is the lowest level's own. Otherwise the
// lowest level lies Δz = LowestLevelAGLM above the station and the ground
// pressure follows from the hypsometric equation (METHODS §1.6) with the
// lowest level's virtual temperature held over the gap:
//
//	p_sfc = p_1 exp(g0 Δz / (Rd Tv_1)).
//
// Holding Tv constant over at most MaxSurfaceGapM (150 m, about 18 hPa)
// errs by about 0.02 hPa for a standard lapse rate and by under 0.15 hPa
// even for a 30 K/km inversion over the gap (the layer-mean Tv is then off
// by 2.3 K, 0.8 %). The result is flagged as derived; it is checked
// against observed surface pressures of the real Sterling file in
// TestSterlingSurfacePressure.
func (r *Result) surfacePressure(s *sounding.Sounding, pr profile, cfg Config) {
	r.SurfacePressurePa = pr.p[0]
	gap := pr.z[0]
	if s.Levels[pr.idx[0]].Kind == sounding.KindSurface || math.IsNaN(s.ElevationM) || r.StandardAnchor || !(gap > 0) {
		return
	}
	tv := pr.t[0]
	if w := pr.w[0]; !math.IsNaN(w) {
		tv = thermo.VirtualTemperature(pr.t[0], w, cfg.Constants.Epsilon)
	}
	r.SurfacePressurePa = pr.p[0] * math.Exp(cfg.Constants.G0*gap/(cfg.Constants.Rd*tv))
	r.SurfacePressureDerived = true
}
