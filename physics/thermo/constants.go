package thermo

import "fmt"

// Constants is a named, versioned set of physical constants. The set used
// for a computation is recorded with its results (see ID), so that numbers
// from different sets are never mixed unknowingly. Differences between the
// presets are about 0.01–0.03 K in θ and well under 1 m per km of
// thickness.
type Constants struct {
	Name    string // short name, e.g. "ussa76"
	Version int    // bumped whenever a value in the named set changes

	Rd      float64 // gas constant of dry air, J kg⁻¹ K⁻¹
	Rv      float64 // gas constant of water vapour, J kg⁻¹ K⁻¹
	Cpd     float64 // specific heat of dry air at constant pressure, J kg⁻¹ K⁻¹
	Kappa   float64 // Poisson constant Rd/cpd, dimensionless
	Epsilon float64 // Rd/Rv = Mw/Md, dimensionless
	G0      float64 // standard gravity, m s⁻² (defines the geopotential metre)
	P0Pa    float64 // reference pressure of potential temperature, Pa
}

// ID returns the name and version as recorded in outputs, e.g. "ussa76.v1".
func (c Constants) ID() string { return fmt.Sprintf("%s.v%d", c.Name, c.Version) }

// USSA76 returns the constant set built on the U.S. Standard Atmosphere 1976
// parameters: Rd = R*/M0 = 8314.32/28.9644 = 287.053 J kg⁻¹ K⁻¹ and
// g0 = 9.80665 m s⁻² (USSA76 parameter list). The standard atmosphere
// treats air as an ideal gas with ratio of specific heats γ = 1.40 (from
// memory), so cpd = Rd γ/(γ−1) = 3.5 Rd and κ = 2/7. Epsilon is Mw/M0 with
// Mw = 18.01528 kg kmol⁻¹ (from memory), and Rv = Rd/ε. p0 = 1000 hPa
// (AMS Glossary, "Poisson equation").
func USSA76() Constants {
	const rd = 8314.32 / 28.9644
	const eps = 18.01528 / 28.9644
	return Constants{
		Name: "ussa76", Version: 1,
		Rd: rd, Rv: rd / eps, Cpd: 3.5 * rd, Kappa: 2.0 / 7.0,
		Epsilon: eps, G0: 9.80665, P0Pa: 100000,
	}
}

// CODATA2018 returns the constant set built on the CODATA 2018 molar gas
// constant R* = 8.314462618 J mol⁻¹ K⁻¹ (exact in the 2019 SI), the molar
// mass of dry air Md = 28.96546 g mol⁻¹ (the CIPM-2007 air-density
// equation) and of water Mw = 18.015268 g mol⁻¹ (all three from memory):
// Rd = R*/Md = 287.04749 J kg⁻¹ K⁻¹ (rounded to 8 digits),
// ε = Mw/Md = 0.6219569, Rv = Rd/ε, cpd = 3.5 Rd (so κ = 2/7 exactly, the
// ideal diatomic gas), g0 = 9.80665 m s⁻² (USSA76, the geopotential metre)
// and p0 = 1000 hPa (AMS Glossary, "Poisson equation"). The same values
// are used by current general-purpose meteorological software, whose
// documented examples the project's check values reproduce (METHODS §1.1).
func CODATA2018() Constants {
	const rd = 287.04749
	const eps = 0.6219569100577033
	return Constants{
		Name: "codata2018", Version: 1,
		Rd: rd, Rv: rd / eps, Cpd: 3.5 * rd, Kappa: 2.0 / 7.0,
		Epsilon: eps, G0: 9.80665, P0Pa: 100000,
	}
}

// Default returns the default constant set, CODATA2018. It is the default
// because the project's check values (thermodynamic examples and the
// hydrostatic heights of the coded test messages) are computed with it; the
// USSA76 set differs by about 0.002 % in Rd.
func Default() Constants { return CODATA2018() }

// ConstantsByName returns the preset with the given name ("ussa76" or
// "codata2018") and whether it exists.
func ConstantsByName(name string) (Constants, bool) {
	switch name {
	case "ussa76":
		return USSA76(), true
	case "codata2018":
		return CODATA2018(), true
	}
	return Constants{}, false
}

// Valid reports whether every constant is finite and positive, so that a
// zero-valued or corrupted set can be refused before use.
func (c Constants) Valid() bool {
	for _, v := range []float64{c.Rd, c.Rv, c.Cpd, c.Kappa, c.Epsilon, c.G0, c.P0Pa} {
		if !(v > 0) || v > 1e300 {
			return false
		}
	}
	return c.Name != ""
}
