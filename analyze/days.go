package analyze

import (
	"math"
	"slices"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/physics/sun"
)

// Tri is a three-valued answer: a day can meet a criterion, fail it, or
// be unknown because the sounding it needs is missing.
type Tri int8

// The values of Tri.
const (
	Unknown Tri = iota
	No
	Yes
)

// TriOf returns Yes or No.
func TriOf(b bool) Tri {
	if b {
		return Yes
	}
	return No
}

// And is the three-valued conjunction: No when either is No, else Unknown
// when either is Unknown, else Yes.
func (a Tri) And(b Tri) Tri {
	switch {
	case a == No || b == No:
		return No
	case a == Unknown || b == Unknown:
		return Unknown
	}
	return Yes
}

// Bool returns a pointer to the answer, nil when unknown (a null column).
func (a Tri) Bool() *bool {
	if a == Unknown {
		return nil
	}
	b := a == Yes
	return &b
}

// DayObs is one sounding as the day records need it: its identity and the
// per-sounding results they are built from. Only analysable soundings
// belong here (the caller leaves the others out).
type DayObs struct {
	StationID    string
	LaunchTime   time.Time // UTC
	LongitudeDeg float64   // degrees east; NaN leaves the sounding out
	SBIPresent   bool
	SBIStrengthK float64 // K; NaN without an SBI
	HeatDeficitJ float64 // J m⁻², NaN when not computable
	// StableFraction: fraction of the lowest 1.5 km with a lapse rate
	// ≤ 2.5 K/km (StableLayerFraction), NaN when not computable.
	StableFraction float64
	ParcelMHM      float64 // m AGL, the sounding's own parcel mixing height (0 surface, NaN undefined)
	// TransportWindMS: mean wind from the ground to the sounding's
	// mixing height (the ventilation transport wind), m/s.
	TransportWindMS float64
}

// DayConfig chooses a day's morning and afternoon soundings. A sounding is
// a morning (afternoon) one when its local mean solar time lies in the
// Pairing windows (defaults 03–10 h and 12–20 h, DefaultPairingConfig);
// among several, the one nearest MorningTargetH (default 6 h, about
// sunrise: proposal, no source) or AfternoonTargetH (default 15 h, the hour
// of the daily maximum of boundary-layer height over land after Liu &
// Liang 2010, METHODS §4.4) is used; on a tie the earlier launch.
// MinStableFraction is the deep-stable-layer fraction (default 0.65,
// Wolyn & McKee 1989).
type DayConfig struct {
	Pairing                          PairingConfig
	MorningTargetH, AfternoonTargetH float64
	MinStableFraction                float64
}

// DefaultDayConfig returns the defaults documented on DayConfig.
func DefaultDayConfig() DayConfig {
	return DayConfig{Pairing: DefaultPairingConfig(), MorningTargetH: 6, AfternoonTargetH: 15,
		MinStableFraction: DefaultStableLayerConfig().MinFraction}
}

// AfternoonSource is where a day's afternoon mixing height comes from
// (DayRecord.AfternoonMHSource).
type AfternoonSource string

// Sources of a day's afternoon mixing height.
const (
	AfternoonFromHolzworth AfternoonSource = "holzworth"        // morning profile and the day's maximum temperature (afternoon_mixing)
	AfternoonFromSounding  AfternoonSource = "afternoon_parcel" // the afternoon sounding's own parcel mixing height
)

// AfternoonSources returns the sources in the order above.
func AfternoonSources() []AfternoonSource {
	return []AfternoonSource{AfternoonFromHolzworth, AfternoonFromSounding}
}

// DayRecord is one station's local solar day.
type DayRecord struct {
	StationID string
	Date      time.Time // local solar date, midnight UTC
	Soundings int       // analysable soundings launched that local day
	Morning   int       // index in the input of the morning sounding, −1 when none
	Afternoon int       // index of the afternoon/evening sounding, −1 when none

	MorningSBI            Tri             // SBI on the morning sounding
	MorningSBIStrengthK   float64         // K, NaN without one
	AfternoonSBI          Tri             // SBI on the afternoon/evening sounding
	MorningHeatDeficitJ   float64         // J m⁻², morning sounding
	AfternoonHeatDeficitJ float64         // J m⁻², afternoon/evening sounding
	MaxHeatDeficitJ       float64         // J m⁻², largest of the day's soundings
	StableFraction        float64         // morning sounding, 0–1
	DeepStable            Tri             // StableFraction ≥ MinStableFraction (Wolyn & McKee 1989)
	AfternoonMHM          float64         // m AGL, NaN unknown
	AfternoonMHSource     AfternoonSource // AfternoonFromHolzworth, AfternoonFromSounding or ""
	AfternoonWindMS       float64         // m/s, transport wind of the afternoon sounding
	VentilationM2S        float64         // m² s⁻¹, AfternoonMHM × AfternoonWindMS
}

// SBIPersists reports whether a morning SBI of at least minStrengthK is
// still present on the afternoon/evening sounding: No without a morning
// SBI of that strength, Unknown when either sounding is missing.
//
// Caution: at many stations the evening launch (00 UTC in the Americas) is
// after sunset in winter, so its SBI may be a new nocturnal one; the
// afternoon mixing height (AfternoonMHM) is the other half of the
// evidence.
func (d DayRecord) SBIPersists(minStrengthK float64) Tri {
	m := d.MorningSBI
	if m == Yes && !(d.MorningSBIStrengthK >= minStrengthK) {
		m = No
	}
	if m == No {
		return No
	}
	return m.And(d.AfternoonSBI)
}

// BuildDays groups soundings into local solar days (sun.LocalSolarDate)
// per station and returns one DayRecord per station and day with at least
// one sounding, sorted by station and date. holzworth maps a day to its
// afternoon (Holzworth) mixing height in m AGL, 0 for status surface, left
// out when undefined (the afternoon_mixing table); a day without one takes
// the afternoon sounding's own parcel mixing height instead. The result
// does not depend on the order of obs.
func BuildDays(obs []DayObs, holzworth map[DayKey]float64, cfg DayConfig) []DayRecord {
	// The soundings are grouped by sorting them by station, date and
	// position in obs, not through a map keyed by day: for the 438,000
	// soundings of a 600 station-year store the sort took about half the
	// CPU samples of the map (perf, 4 December 2026), and each day's
	// soundings keep the order of obs.
	type ref struct {
		i    int
		date time.Time
	}
	refs := make([]ref, 0, len(obs))
	for i, o := range obs {
		if d, ok := sun.LocalSolarDate(o.LaunchTime, o.LongitudeDeg); ok {
			refs = append(refs, ref{i, d})
		}
	}
	slices.SortFunc(refs, func(a, b ref) int {
		if c := strings.Compare(obs[a.i].StationID, obs[b.i].StationID); c != 0 {
			return c
		}
		if c := a.date.Compare(b.date); c != 0 {
			return c
		}
		return a.i - b.i
	})
	// Day j is keys[j], its soundings order[start[j]:start[j+1]].
	var keys []DayKey
	var start []int
	order := make([]int, len(refs))
	for j, r := range refs {
		order[j] = r.i
		k := DayKey{obs[r.i].StationID, r.date}
		if n := len(keys); n == 0 || keys[n-1] != k {
			keys = append(keys, k)
			start = append(start, j)
		}
	}
	start = append(start, len(refs))
	in := func(h, from, to float64) bool { return h >= from && h < to }
	out := make([]DayRecord, 0, len(keys))
	for j, k := range keys {
		idx := order[start[j]:start[j+1]]
		d := DayRecord{StationID: k.StationID, Date: k.Date, Soundings: len(idx), Morning: -1, Afternoon: -1,
			MorningSBIStrengthK: math.NaN(), MorningHeatDeficitJ: math.NaN(), AfternoonHeatDeficitJ: math.NaN(), MaxHeatDeficitJ: math.NaN(),
			StableFraction: math.NaN(), AfternoonMHM: math.NaN(), AfternoonWindMS: math.NaN(), VentilationM2S: math.NaN()}
		best := func(cur, i int, target float64) int {
			if cur < 0 {
				return i
			}
			hc := sun.LocalMeanSolarTime(obs[cur].LaunchTime, obs[cur].LongitudeDeg)
			hi := sun.LocalMeanSolarTime(obs[i].LaunchTime, obs[i].LongitudeDeg)
			dc, di := math.Abs(hc-target), math.Abs(hi-target)
			if di < dc || di == dc && obs[i].LaunchTime.Before(obs[cur].LaunchTime) {
				return i
			}
			return cur
		}
		for _, i := range idx {
			o := obs[i]
			if h := o.HeatDeficitJ; !math.IsNaN(h) && (math.IsNaN(d.MaxHeatDeficitJ) || h > d.MaxHeatDeficitJ) {
				d.MaxHeatDeficitJ = h
			}
			lst := sun.LocalMeanSolarTime(o.LaunchTime, o.LongitudeDeg)
			switch {
			case in(lst, cfg.Pairing.MorningFromH, cfg.Pairing.MorningToH):
				d.Morning = best(d.Morning, i, cfg.MorningTargetH)
			case in(lst, cfg.Pairing.AfternoonFromH, cfg.Pairing.AfternoonToH):
				d.Afternoon = best(d.Afternoon, i, cfg.AfternoonTargetH)
			}
		}
		if d.Morning >= 0 {
			m := obs[d.Morning]
			d.MorningSBI = TriOf(m.SBIPresent)
			if m.SBIPresent {
				d.MorningSBIStrengthK = m.SBIStrengthK
			}
			d.MorningHeatDeficitJ = m.HeatDeficitJ
			d.StableFraction = m.StableFraction
			if !math.IsNaN(m.StableFraction) {
				d.DeepStable = TriOf(m.StableFraction >= cfg.MinStableFraction)
			}
		}
		if h, ok := holzworth[k]; ok && !math.IsNaN(h) {
			d.AfternoonMHM, d.AfternoonMHSource = h, AfternoonFromHolzworth
		}
		if d.Afternoon >= 0 {
			a := obs[d.Afternoon]
			d.AfternoonSBI = TriOf(a.SBIPresent)
			d.AfternoonHeatDeficitJ = a.HeatDeficitJ
			if math.IsNaN(d.AfternoonMHM) && !math.IsNaN(a.ParcelMHM) {
				d.AfternoonMHM, d.AfternoonMHSource = a.ParcelMHM, AfternoonFromSounding
			}
			d.AfternoonWindMS = a.TransportWindMS
		}
		d.VentilationM2S = d.AfternoonMHM * d.AfternoonWindMS
		out = append(out, d)
	}
	return out
}
