package analyze

import (
	"fmt"
	"math"
	"sort"

	"github.com/sondeclim/sondeclim/analyze/stats"
)

// MixingHeightStatus says whether a mixing-height method found a height
// (METHODS §4): every method, the parcel and the consensus report one.
type MixingHeightStatus string

// Mixing-height statuses.
const (
	MixingHeightOK        MixingHeightStatus = "ok"        // a height was found below the ceiling
	MixingHeightSurface   MixingHeightStatus = "surface"   // the method gives the ground (the parcel is stable from the ground up): height 0
	MixingHeightUndefined MixingHeightStatus = "undefined" // no result (no crossing below the ceiling, missing input, not analysable)
)

// Defined reports whether the status gives a height: ok or surface (0 m).
func (s MixingHeightStatus) Defined() bool { return s == MixingHeightOK || s == MixingHeightSurface }

// MixingHeightStatuses returns the mixing-height statuses in the order
// above (the vocabulary of the status columns of the store).
func MixingHeightStatuses() []MixingHeightStatus {
	return []MixingHeightStatus{MixingHeightOK, MixingHeightSurface, MixingHeightUndefined}
}

// Mixing-height method names (the registry, methods.go, gives their order).
const (
	// MethodParcel: Holzworth parcel, surface temperature + Parcel.ExcessK,
	// environmental θ (METHODS §4.1). Same value as Result.Parcel.
	MethodParcel = "parcel"
	// MethodParcelVirtual: the same with virtual potential temperature,
	// parcel θv from the surface T (+ excess) and surface mixing ratio.
	MethodParcelVirtual = "parcel_virtual"
	// MethodHeffter: Heffter (1980) critical layer (METHODS §4.2).
	MethodHeffter = "heffter"
	// MethodRichardson: bulk Richardson number, Ric = Richardson.Critical.
	MethodRichardson = "bulk_richardson"
	// MethodRichardsonAlt: bulk Richardson number, Ric = Richardson.CriticalAlt.
	MethodRichardsonAlt = "bulk_richardson_alt"
	// MethodLiuLiang: Liu & Liang (2010) (METHODS §4.4).
	MethodLiuLiang = "liu_liang"
	// MethodSBITop: top of the surface-based inversion (METHODS §4.5).
	MethodSBITop = "sbi_top"
	// MethodElevatedBase: base of the lowest elevated inversion (METHODS §4.5).
	MethodElevatedBase = "elevated_inversion_base"
)

// MixingHeight is one method's mixing height.
type MixingHeight struct {
	Method     string  // the Name of a registered Method
	HeightAGLM float64 // m AGL; 0 for surface, NaN for undefined
	Status     MixingHeightStatus
	// Note is a short snake_case reason for undefined results (e.g.
	// "missing_wind", "no_crossing"), or a detail of an ok result (e.g.
	// "ric=0.25", "regime=SBL;llj"); may be empty.
	Note string
	// LevelSpacingM is the spacing of the sounding's levels around the
	// height (MixingHeightConfig resolution rule), m; NaN unless ok.
	LevelSpacingM float64
	// Unresolved is true when an ok height is not resolved by the
	// sounding's vertical resolution (MixingHeightConfig).
	Unresolved bool
}

func undefinedMH(method, note string) MixingHeight {
	return MixingHeight{Method: method, HeightAGLM: math.NaN(), Status: MixingHeightUndefined, Note: note, LevelSpacingM: math.NaN()}
}

func mhFrom(method string, h float64, status MixingHeightStatus, note string) MixingHeight {
	if status == MixingHeightUndefined {
		return undefinedMH(method, note)
	}
	return MixingHeight{Method: method, HeightAGLM: h, Status: status, Note: note, LevelSpacingM: math.NaN()}
}

// MixingHeightConfig holds the consensus and resolution rules.
type MixingHeightConfig struct {
	// Consensus lists the methods whose ok heights enter the consensus
	// (their median) and the spread (max − min). Default: the registered
	// methods whose Consensus flag is set (every method except
	// MethodRichardsonAlt, so that the Richardson method is not counted
	// twice; proposal, no source).
	Consensus []string
	// ByRegime restricts the consensus of each sounding to the methods of
	// Consensus that fit its boundary-layer regime (Result.Regime,
	// ClassifyRegime; Method.Regimes): stable-layer methods at night and
	// dawn, convective ones by day. Default true (METHODS §4.6a; the
	// median over every method mixes residual-layer tops into night-time
	// heights). False gives the median over all of Consensus.
	ByRegime bool
	// Resolution rule: an ok height h is Unresolved when the spacing Δz of
	// the sounding's levels around it (the levels that bracket it; when h
	// falls on a level, the larger of the two adjacent spacings) exceeds
	// MaxSpacingFraction·h or MaxSpacingM. Defaults 0.5 (METHODS §4.3:
	// resolution uncertainty "can exceed 50 % for shallow boundary layers",
	// Seidel et al. 2012) and 500 m (proposal, no source).
	MaxSpacingFraction float64
	MaxSpacingM        float64
}

// DefaultMixingHeightConfig returns the defaults documented on the fields.
func DefaultMixingHeightConfig() MixingHeightConfig {
	return MixingHeightConfig{
		Consensus:          defaultConsensus(),
		ByRegime:           true,
		MaxSpacingFraction: 0.5, MaxSpacingM: 500,
	}
}

func defaultConsensus() []string {
	var names []string
	for _, m := range methods {
		if m.Consensus {
			names = append(names, m.Name)
		}
	}
	return names
}

// Consensus is the summary of the methods' mixing heights.
type Consensus struct {
	// HeightAGLM is the median of the ok heights of the consensus methods
	// (mean of the middle two for an even count), m AGL; 0 when none is ok
	// but one is surface; NaN when all are undefined.
	HeightAGLM float64
	Status     MixingHeightStatus
	// SpreadM is max − min of the ok heights, m (0 for a single one, NaN
	// for none).
	SpreadM float64
	OK      int // number of consensus methods with status ok
	Surface int // number with status surface
	// Unresolved applies the resolution rule to HeightAGLM.
	Unresolved    bool
	LevelSpacingM float64 // m, as for MixingHeight
}

// ConsensusOf returns the consensus of the methods in mh whose names are
// listed in methods (see Consensus). Pure: the resolution fields are left
// false/NaN.
func ConsensusOf(mh []MixingHeight, methods []string) Consensus {
	c := Consensus{HeightAGLM: math.NaN(), Status: MixingHeightUndefined, SpreadM: math.NaN(), LevelSpacingM: math.NaN()}
	var buf [16]float64
	hs := buf[:0]
	for _, m := range mh {
		use := false
		for _, name := range methods {
			use = use || name == m.Method
		}
		switch {
		case !use:
		case m.Status == MixingHeightOK:
			hs = append(hs, m.HeightAGLM)
		case m.Status == MixingHeightSurface:
			c.Surface++
		}
	}
	c.OK = len(hs)
	switch {
	case len(hs) > 0:
		sort.Float64s(hs)
		c.HeightAGLM = stats.MedianSorted(hs)
		c.Status, c.SpreadM = MixingHeightOK, hs[len(hs)-1]-hs[0]
	case c.Surface > 0:
		c.HeightAGLM, c.Status = 0, MixingHeightSurface
	}
	return c
}

// levelSpacing returns the spacing in m of the profile levels (first n)
// around height h (m AGL): the bracketing interval, or when h falls on a
// level the larger adjacent interval. NaN outside the profile.
func (pr profile) levelSpacing(h float64, n int) float64 {
	if n < 2 || !(h >= pr.z[0] && h <= pr.z[n-1]) {
		return math.NaN()
	}
	k := sort.SearchFloat64s(pr.z[:n], h) // first z ≥ h
	if pr.z[k] != h {
		return pr.z[k] - pr.z[k-1]
	}
	d := 0.0
	if k > 0 {
		d = pr.z[k] - pr.z[k-1]
	}
	if k+1 < n {
		d = max(d, pr.z[k+1]-pr.z[k])
	}
	return d
}

// resolve sets the resolution fields of an ok height.
func (cfg MixingHeightConfig) resolve(h float64, spacing float64) bool {
	return spacing > cfg.MaxSpacingFraction*h || spacing > cfg.MaxSpacingM
}

// ---- Bulk Richardson number (METHODS §4.3) ----

// ricNote returns "ric=<value>", without allocating for the defaults.
func ricNote(ric float64) string {
	switch ric {
	case 0.25:
		return "ric=0.25"
	case 0.5:
		return "ric=0.5"
	}
	return fmt.Sprintf("ric=%g", ric)
}

// RichardsonConfig parameterises the bulk Richardson number method.
type RichardsonConfig struct {
	// Critical and CriticalAlt are the two critical values reported.
	// Defaults 0.25 (Seidel et al. 2012 via an Environment Canada routine,
	// METHODS §4.3) and 0.5 (also in use; Troen & Mahrt 1986, from memory
	// there).
	Critical, CriticalAlt float64
	// FrictionB and FrictionVelocityMS give the friction term b u*² added
	// to the shear. Defaults b = 100 (METHODS §4.3, confirmed there) and
	// u* = 0 m/s (unknown for radiosondes), so the term is 0.
	FrictionB          float64
	FrictionVelocityMS float64
	// SubtractSurfaceWind subtracts the surface wind (us, vs) from the
	// winds aloft; default false (us = vs = 0, METHODS §4.3 common choice).
	SubtractSurfaceWind bool
	// MinShearSqM2S2 is the floor on the denominator, m²/s². Default 0.01
	// (METHODS §4.3 example value).
	MinShearSqM2S2 float64
	// CeilingAGLM: no crossing above this height (also bounded by the
	// Analyze ceiling). Default 4000 m (METHODS §4.3, a toolkit's choice).
	CeilingAGLM float64
}

// DefaultRichardsonConfig returns the defaults documented on the fields.
func DefaultRichardsonConfig() RichardsonConfig {
	return RichardsonConfig{Critical: 0.25, CriticalAlt: 0.5, FrictionB: 100, MinShearSqM2S2: 0.01, CeilingAGLM: 4000}
}

// BulkRichardsonNumbers fills dst with the bulk Richardson number of each
// level relative to the first (the surface reference, index 0), after
// Vogelezang & Holtslag (1996) as used by Seidel et al. (2012), METHODS §4.3:
//
//	Rib(z) = (g/θvs)(θv(z) − θvs)(z − zs) / max((u − us)² + (v − vs)² + b u*², floor)
//
// for heights zAGLM (m), virtual potential temperatures thetaVK (K) and
// wind components uMS, vMS (m/s); g in m/s². us = vs = 0 unless
// cfg.SubtractSurfaceWind. dst[0] = 0. A level whose wind (or the
// reference wind, when subtracted) or θv is NaN gets NaN: missing winds
// never count as calm. dst must be as long as zAGLM; mismatched lengths
// fill dst with NaN.
func BulkRichardsonNumbers(dst, zAGLM, thetaVK, uMS, vMS []float64, g float64, cfg RichardsonConfig) {
	n := len(zAGLM)
	if len(thetaVK) != n || len(uMS) != n || len(vMS) != n || len(dst) != n {
		for i := range dst {
			dst[i] = math.NaN()
		}
		return
	}
	if n == 0 {
		return
	}
	us, vs := 0.0, 0.0
	if cfg.SubtractSurfaceWind {
		us, vs = uMS[0], vMS[0]
	}
	fr := cfg.FrictionB * cfg.FrictionVelocityMS * cfg.FrictionVelocityMS
	dst[0] = 0
	for k := 1; k < n; k++ {
		du, dv := uMS[k]-us, vMS[k]-vs
		den := max(du*du+dv*dv+fr, cfg.MinShearSqM2S2)
		if math.IsNaN(du) || math.IsNaN(dv) {
			den = math.NaN()
		}
		dst[k] = g / thetaVK[0] * (thetaVK[k] - thetaVK[0]) * (zAGLM[k] - zAGLM[0]) / den
	}
	if math.IsNaN(thetaVK[0]) || math.IsNaN(zAGLM[0]) {
		dst[0] = math.NaN()
	}
}

// RichardsonHeight returns the lowest height in m AGL where the bulk
// Richardson numbers rib (at heights zAGLM, m, increasing; rib[0] = 0 at
// the surface reference) reach ric, interpolated linearly in Rib between
// the bracketing levels, and a status and note. Walking up from the
// surface, a NaN Rib before the crossing gives undefined "missing_wind"; no
// crossing at or below ceilingAGLM gives undefined "no_crossing". The
// surface reference itself never counts, so the status is never surface.
func RichardsonHeight(zAGLM, rib []float64, ric, ceilingAGLM float64) (heightAGLM float64, status MixingHeightStatus, note string) {
	nan := math.NaN()
	if len(zAGLM) != len(rib) || len(rib) < 2 || math.IsNaN(rib[0]) {
		return nan, MixingHeightUndefined, "too_few_levels"
	}
	for k := 1; k < len(rib); k++ {
		if zAGLM[k] > ceilingAGLM && rib[k] < ric {
			break
		}
		if math.IsNaN(rib[k]) {
			return nan, MixingHeightUndefined, "missing_wind"
		}
		if rib[k] >= ric {
			h := zAGLM[k-1] + (ric-rib[k-1])/(rib[k]-rib[k-1])*(zAGLM[k]-zAGLM[k-1])
			if h > ceilingAGLM {
				break
			}
			return h, MixingHeightOK, ricNote(ric)
		}
	}
	return nan, MixingHeightUndefined, "no_crossing"
}

// mixingHeights fills MixingHeights (one entry per registered method, in
// registry order), LiuLiangRegime, Regime, MixingHeightConsensus and
// ResidualTopAGLM from the profile's first n (searched) levels. in, when
// not nil, is reused (its grids' slice kept), and sc is the working memory.
func (r *Result) mixingHeights(pr profile, n int, cfg Config, in *methodInput, sc *scratch) {
	if in == nil {
		in = &methodInput{}
	}
	*in = methodInput{r: r, pr: pr, n: n, cfg: cfg, sc: sc, grids: in.grids[:0]}
	mh := r.MixingHeights
	for i, m := range methods {
		mh[i] = m.height(in)
		if mh[i].Status == MixingHeightOK {
			mh[i].LevelSpacingM = pr.levelSpacing(mh[i].HeightAGLM, n)
			mh[i].Unresolved = cfg.MixingHeight.resolve(mh[i].HeightAGLM, mh[i].LevelSpacingM)
		}
	}
	r.Regime = ClassifyRegime(r.SunClass, r.SBI.Present, r.LiuLiangRegime)
	names := cfg.MixingHeight.Consensus
	if cfg.MixingHeight.ByRegime {
		var buf [16]string
		names = regimeConsensus(buf[:0], names, r.Regime, r.LiuLiangRegime)
	}
	r.MixingHeightConsensus = ConsensusOf(mh, names)
	if cs := &r.MixingHeightConsensus; cs.Status == MixingHeightOK {
		cs.LevelSpacingM = pr.levelSpacing(cs.HeightAGLM, n)
		cs.Unresolved = cfg.MixingHeight.resolve(cs.HeightAGLM, cs.LevelSpacingM)
	}
	r.ResidualTopAGLM = r.residualTop(cfg.Heffter.MaxBaseAGLM)
}

// ventilation fills Ventilation from the chosen mixing height and the
// wind profile.
func (r *Result) ventilation(wp windProfile, cfg Config) {
	v := &r.Ventilation
	h, st := r.MixingHeightConsensus.HeightAGLM, r.MixingHeightConsensus.Status
	if cfg.Ventilation.HeightMethod != HeightConsensus {
		h, st = math.NaN(), MixingHeightUndefined
		for _, m := range r.MixingHeights {
			if m.Method == cfg.Ventilation.HeightMethod {
				h, st = m.HeightAGLM, m.Status
			}
		}
	}
	if st == MixingHeightUndefined {
		return
	}
	v.MixingHeightAGLM = h
	i0 := 0
	for i0 < len(wp.z) && wp.z[i0] < 0 {
		i0++
	}
	if i0 == len(wp.z) || wp.z[i0] > cfg.MaxSurfaceGapM {
		return
	}
	v.TransportWindMS = TransportWind(wp.z[i0:], wp.u[i0:], wp.v[i0:], h, cfg.Ventilation.TransportWind)
	v.IndexM2S = VentilationIndex(h, v.TransportWindMS)
	v.IndexKtFt = v.IndexM2S * KtFtPerM2S
	v.Category = cfg.Ventilation.Table.Category(v.IndexM2S)
}
