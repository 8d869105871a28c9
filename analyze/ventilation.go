package analyze

import "math"

// KtFtPerM2S converts a ventilation index from m²/s to knot·feet:
// 1 m²/s = (1/0.514444 kt)(1/0.3048 ft) = 6.37744 kt·ft (METHODS §5 [D];
// 1 kt = 1852/3600 m/s and 1 ft = 0.3048 m exactly by definition).
const KtFtPerM2S = 3600.0 / 1852 / 0.3048

// VentilationUnit is the unit of a ventilation category table.
type VentilationUnit string

// Ventilation-table units.
const (
	UnitM2S  VentilationUnit = "m2/s"
	UnitKtFt VentilationUnit = "kt*ft"
)

// VentilationCategory is one row of a category table: values at or above
// MinInclusive (and below the next row's) fall in Label.
type VentilationCategory struct {
	Label        string
	MinInclusive float64 // in the table's Unit
}

// VentilationTable maps a ventilation index to a category. Agencies use
// different thresholds, units and index definitions ("the scales used for
// burning recommendations may vary", METHODS §5), so the table in use is
// configuration and its Name is recorded with every result.
type VentilationTable struct {
	Name       string
	Unit       VentilationUnit       // UnitM2S or UnitKtFt
	Categories []VentilationCategory // ascending MinInclusive; the first should be 0
	// Source names who set the thresholds. It does not change a result,
	// so it is left out of the analysis parameters (and their hash).
	Source string `json:"-"`
}

// Category returns the label of the category holding viM2S (m²/s,
// converted to the table's unit), "" for NaN, a negative index, a value
// below the first row, or an unknown unit.
func (t VentilationTable) Category(viM2S float64) string {
	v := viM2S
	switch t.Unit {
	case UnitM2S:
	case UnitKtFt:
		v *= KtFtPerM2S
	default:
		return ""
	}
	label := ""
	if !(v >= 0) {
		return label
	}
	for _, c := range t.Categories {
		if v >= c.MinInclusive {
			label = c.Label
		}
	}
	return label
}

// GenericVentilationTable is a three-class table in m²/s: "poor" below
// 2000, "fair" from 2000, "good" from 6000. The 6000 m²/s boundary follows
// the guidance quoted in METHODS §5 (a ventilation rate above
// 6000 m²/s for good dispersal; below 6000 m²/s as high pollution
// potential); the 2000 m²/s boundary is a proposal with no source.
func GenericVentilationTable() VentilationTable {
	return VentilationTable{Name: "generic", Unit: UnitM2S, Categories: []VentilationCategory{
		{"poor", 0}, {"fair", 2000}, {"good", 6000}},
		Source: "6000 m2/s from the guidance quoted in METHODS §5; 2000 m2/s a proposal, no source"}
}

// NCVISTable is the North Carolina Forest Service Ventilation Index
// System, categories 1–5 by knot·feet: 1 = 0–33 499, 2 = 33 500–44 999,
// 3 = 45 000–59 999, 4 = 60 000–111 999, 5 = ≥ 112 000 (METHODS §5, from a
// 2015 NC Prescribed Fire Council presentation; the unit is presumed
// kt·ft there).
func NCVISTable() VentilationTable {
	return VentilationTable{Name: "nc_vis", Unit: UnitKtFt, Categories: []VentilationCategory{
		{"1", 0}, {"2", 33500}, {"3", 45000}, {"4", 60000}, {"5", 112000}},
		Source: "North Carolina Forest Service Ventilation Index System, as quoted in METHODS §5 (2015 NC Prescribed Fire Council presentation)"}
}

// VentilationConfig selects the inputs of the ventilation index.
type VentilationConfig struct {
	// HeightMethod names the mixing height used: "consensus" (default) or
	// the Name of a registered Method (Methods).
	HeightMethod string
	// TransportWind is TransportScalar (default) or TransportVector.
	TransportWind TransportConvention
	// Table categorises the index; default GenericVentilationTable.
	Table VentilationTable
}

// HeightConsensus names the consensus mixing height in VentilationConfig.
const HeightConsensus = "consensus"

// DefaultVentilationConfig returns the defaults documented on the fields.
func DefaultVentilationConfig() VentilationConfig {
	return VentilationConfig{HeightMethod: HeightConsensus, TransportWind: TransportScalar, Table: GenericVentilationTable()}
}

// Ventilation is the ventilation index of one sounding.
type Ventilation struct {
	HeightMethod     string              // mixing height used (VentilationConfig.HeightMethod)
	MixingHeightAGLM float64             // m AGL; NaN when that height is undefined
	TransportWind    TransportConvention // averaging convention
	TransportWindMS  float64             // m/s, mean wind from the ground to the mixing height
	IndexM2S         float64             // m²/s, MixingHeightAGLM × TransportWindMS
	IndexKtFt        float64             // kt·ft, IndexM2S × KtFtPerM2S
	Table            string              // name of the category table
	Category         string              // label, "" when the index is NaN
}

// VentilationIndex returns VI = MH × U in m²/s for a mixing height mhM (m
// AGL) and a transport wind uMS (m/s) (METHODS §5). NaN when either is
// NaN or negative.
func VentilationIndex(mhM, uMS float64) float64 {
	if !(mhM >= 0) || !(uMS >= 0) {
		return math.NaN()
	}
	return mhM * uMS
}
