package analyze

import (
	"math"
	"strings"

	"github.com/sondeclim/sondeclim/physics/thermo"
)

// Method is one entry of the mixing-height method registry: everything the
// rest of the program knows about a method. The registry's order is the
// order of Result.MixingHeights, of the mixing_heights rows of a sounding
// and of the methods in query results (queries creates its SQL macro
// method_rank from it); results are looked up by name (Result.MixingHeight),
// never by position.
//
// To add a method: write its height function (and, when it has tunable
// thresholds, its Config type with documented defaults and a field in
// Config), add one entry to the methods table below, and test it against
// an outside source. The rows, the consensus, the schema documentation and
// the SQL order follow from the entry.
type Method struct {
	// Name is the value of mixing_heights.method, snake_case; stable.
	Name string
	// Title is the method's name in words for people (figure labels,
	// report headings), e.g. "bulk Richardson (alternative)"; Name stays
	// the value programs use.
	Title string
	// Detail is a short note shown after the name in the schema
	// documentation (e.g. "critical 0.25"); may be empty.
	Detail string
	// Config names the field of Config that parameterises the method
	// ("" when it has no parameters of its own).
	Config string
	// Regimes lists the boundary-layer regimes the method may define the
	// mixing height in (BLConvective, BLStable, BLNeutral; METHODS §4.6a):
	// with MixingHeightConfig.ByRegime, only those methods enter the
	// consensus of a sounding in that regime (see ClassifyRegime and
	// fitsRegime).
	Regimes []BLRegime
	// Consensus is true when the method enters the default consensus
	// (DefaultMixingHeightConfig).
	Consensus bool
	// height computes the method's mixing height; the LevelSpacingM and
	// Unresolved fields are filled afterwards for every method alike.
	height func(*methodInput) MixingHeight
}

// The regime assignments follow METHODS §4.6a (Liu & Liang 2010 and Seidel
// et al. 2010's assignment of methods, the latter from memory there):
// stable-layer methods (SBI top, bulk Richardson, Liu–Liang SBL height) at
// night, convective ones (parcel, Heffter, bulk Richardson, Liu–Liang CBL
// height, EI base) by day. Heffter and the EI base find the top of the
// previous day's residual layer at night (reported as
// Result.ResidualTopAGLM instead); the parcel from a night-time surface
// temperature stops at the ground. The neutral assignments of the
// Richardson and Liu–Liang methods are a proposal, no source: both are
// defined in a near-neutral layer, the others find a residual top.
var (
	allRegimes        = []BLRegime{BLConvective, BLStable, BLNeutral}
	convectiveRegimes = []BLRegime{BLConvective}
	stableRegimes     = []BLRegime{BLStable}
)

// methods is the registry, in output order. The consensus flags keep the
// Richardson method from being counted twice (its alternative critical
// value stays out; proposal, no source).
var methods = []Method{
	{Name: MethodParcel, Title: "Holzworth parcel", Config: "Parcel", Regimes: convectiveRegimes, Consensus: true, height: parcelHeight},
	{Name: MethodParcelVirtual, Title: "parcel (virtual temperature)", Config: "Parcel", Regimes: convectiveRegimes, Consensus: true, height: parcelVirtualHeight},
	{Name: MethodHeffter, Title: "Heffter", Config: "Heffter", Regimes: convectiveRegimes, Consensus: true, height: heffterHeight},
	{Name: MethodRichardson, Title: "bulk Richardson", Detail: "critical 0.25", Config: "Richardson", Regimes: allRegimes, Consensus: true,
		height: func(in *methodInput) MixingHeight { return in.richardson(MethodRichardson, in.cfg.Richardson.Critical) }},
	{Name: MethodRichardsonAlt, Title: "bulk Richardson (alternative)", Detail: "critical 0.5", Config: "Richardson", Regimes: allRegimes,
		height: func(in *methodInput) MixingHeight {
			return in.richardson(MethodRichardsonAlt, in.cfg.Richardson.CriticalAlt)
		}},
	{Name: MethodLiuLiang, Title: "Liu-Liang", Config: "LiuLiang", Regimes: allRegimes, Consensus: true, height: liuLiangHeight},
	{Name: MethodSBITop, Title: "surface inversion top", Config: "Inversion", Regimes: stableRegimes, Consensus: true, height: sbiTopHeight},
	{Name: MethodElevatedBase, Title: "elevated inversion base", Config: "Inversion", Regimes: convectiveRegimes, Consensus: true, height: elevatedBaseHeight},
}

// Methods returns a copy of the mixing-height method registry, in output
// order.
func Methods() []Method {
	out := make([]Method, len(methods))
	copy(out, methods)
	return out
}

// MethodNames returns the names of the registered methods, in output order.
func MethodNames() []string {
	out := make([]string, len(methods))
	for i, m := range methods {
		out[i] = m.Name
	}
	return out
}

// LookupMethod returns the registered method called name.
func LookupMethod(name string) (Method, bool) {
	for _, m := range methods {
		if m.Name == name {
			return m, true
		}
	}
	return Method{}, false
}

// MethodTitle returns the name in words of the method called name (its
// Title), "consensus of methods" for HeightConsensus, and name itself for
// a name the registry does not hold (a store written by another version).
func MethodTitle(name string) string {
	if name == HeightConsensus {
		return "consensus of methods"
	}
	if m, ok := LookupMethod(name); ok && m.Title != "" {
		return m.Title
	}
	return name
}

// MethodsDoc lists the registered methods for the schema documentation:
// "name (detail), name, …" in output order.
func MethodsDoc() string {
	parts := make([]string, len(methods))
	for i, m := range methods {
		parts[i] = m.Name
		if m.Detail != "" {
			parts[i] += " (" + m.Detail + ")"
		}
	}
	return strings.Join(parts, ", ")
}

// MixingHeight returns the result of the method called name, and false
// when the result holds none (an unknown name).
func (r *Result) MixingHeight(name string) (MixingHeight, bool) {
	for _, m := range r.MixingHeights {
		if m.Method == name {
			return m, true
		}
	}
	return MixingHeight{}, false
}

// methodInput is what a method's height function may use: the profile's
// first n (searched) levels, the configuration and the result so far
// (inversions, parcel), with the derived profiles that several methods
// share computed once.
type methodInput struct {
	r   *Result
	pr  profile
	n   int
	cfg Config
	sc  *scratch // working memory of the grids and Richardson numbers

	grids []steppedGrid // pressure grids computed so far
	rib   []float64     // bulk Richardson numbers of the first n levels; nil until needed
}

type steppedGrid struct {
	stepPa float64
	g      grid
}

// gridOf returns the profile resampled at stepPa, computed once per step.
func (in *methodInput) gridOf(stepPa float64) grid {
	for _, sg := range in.grids {
		if sg.stepPa == stepPa {
			return sg.g
		}
	}
	g := in.pr.grid(in.n, stepPa, in.sc)
	in.grids = append(in.grids, steppedGrid{stepPa, g})
	return g
}

// richardson returns the bulk Richardson mixing height for the critical
// value ric.
func (in *methodInput) richardson(name string, ric float64) MixingHeight {
	pr, n, cfg := in.pr, in.n, in.cfg
	if in.rib == nil {
		in.rib = in.sc.floats(n)
		BulkRichardsonNumbers(in.rib, pr.z[:n], pr.thetav[:n], pr.u[:n], pr.v[:n], cfg.Constants.G0, cfg.Richardson)
	}
	rc := min(cfg.Richardson.CeilingAGLM, in.r.CeilingAGLM)
	h, st, note := RichardsonHeight(pr.z[:n], in.rib, ric, rc)
	return mhFrom(name, h, st, note)
}

// crossingNote is the note of the parcel methods: "no_crossing" when
// undefined.
func crossingNote(status MixingHeightStatus) string {
	if status == MixingHeightUndefined {
		return "no_crossing"
	}
	return ""
}

func parcelHeight(in *methodInput) MixingHeight {
	p := in.r.Parcel
	return mhFrom(MethodParcel, p.HeightAGLM, p.Status, crossingNote(p.Status))
}

func parcelVirtualHeight(in *methodInput) MixingHeight {
	w0 := in.pr.w[0]
	if math.IsNaN(w0) {
		return undefinedMH(MethodParcelVirtual, "no_surface_humidity")
	}
	th0v := thermo.VirtualPotentialTemperature(in.r.Parcel.Theta0K, w0, in.cfg.Constants.Epsilon)
	h, st := ParcelMixingHeight(in.pr.z, in.pr.thetav, th0v, in.r.CeilingAGLM)
	return mhFrom(MethodParcelVirtual, h, st, crossingNote(st))
}

func heffterHeight(in *methodInput) MixingHeight {
	g := in.gridOf(in.cfg.Heffter.GridStepPa)
	h, st, note := HeffterHeight(g.z, g.theta, in.cfg.Heffter)
	return mhFrom(MethodHeffter, h, st, note)
}

// liuLiangHeight also sets Result.LiuLiangRegime.
func liuLiangHeight(in *methodInput) MixingHeight {
	g := in.gridOf(in.cfg.LiuLiang.GridStepPa)
	h, regime, st, note := LiuLiangHeight(g.z, g.theta, g.speed, in.cfg.LiuLiang)
	in.r.LiuLiangRegime = regime
	return mhFrom(MethodLiuLiang, h, st, note)
}

func sbiTopHeight(in *methodInput) MixingHeight {
	v := in.r.SBI
	if !v.Present {
		return undefinedMH(MethodSBITop, "no_sbi")
	}
	note := ""
	if v.TopAtCeiling {
		note = "top_at_ceiling"
	}
	return mhFrom(MethodSBITop, v.TopAGLM, MixingHeightOK, note)
}

func elevatedBaseHeight(in *methodInput) MixingHeight {
	if v := in.r.LowestElevated; v.Present {
		return mhFrom(MethodElevatedBase, v.BaseAGLM, MixingHeightOK, "")
	}
	return undefinedMH(MethodElevatedBase, "no_elevated_inversion")
}
