package analyze

import (
	"math"
	"sort"

	"github.com/sondeclim/sondeclim/sounding"
)

// TransportConvention is a transport-wind averaging convention (METHODS §5),
// the column soundings.transport_wind_method.
type TransportConvention string

// Transport-wind averaging conventions.
const (
	// TransportScalar is the height-weighted mean of the scalar speed,
	// (1/MH)∫₀^MH |V| dz, trapezoid in z. The default.
	TransportScalar TransportConvention = "scalar_mean"
	// TransportVector is the speed of the height-weighted mean vector,
	// |(1/MH)∫₀^MH V dz|, trapezoid in z on u and v.
	TransportVector TransportConvention = "vector_mean"
)

// TransportWinds returns the conventions in the order above.
func TransportConventions() []TransportConvention {
	return []TransportConvention{TransportScalar, TransportVector}
}

// levelWind returns the wind components of a level in m/s, u = −s sin d,
// v = −s cos d for speed s (m/s) and direction d (degrees, from), and
// whether both speed and direction are usable (0 ≤ s ≤ 150 m/s,
// 0 ≤ d ≤ 360°). A calm (s = 0) gives u = v = 0.
func levelWind(l *sounding.Level) (u, v float64, ok bool) {
	s, d := l.WindSpeedMS, l.WindDirectionDeg
	if !(s >= 0 && s <= 150) || !(d >= 0 && d <= 360) {
		return math.NaN(), math.NaN(), false
	}
	sd, cd := sincosDeg(d)
	return -s * sd, -s * cd, true
}

// sincosWhole holds math.Sincos(d·π/180) for the whole degrees d = 0…360,
// the directions most sources report.
var sincosWhole = func() (t [361][2]float64) {
	for i := range t {
		t[i][0], t[i][1] = math.Sincos(float64(i) * math.Pi / 180)
	}
	return t
}()

// sincosDeg returns math.Sincos(d·π/180) for a direction d in degrees
// (0 ≤ d ≤ 360), from the table for whole degrees (the same expression on
// the same bits, computed once), else computed.
func sincosDeg(d float64) (sin, cos float64) {
	if i := int(d); float64(i) == d && i >= 0 && i <= 360 {
		return sincosWhole[i][0], sincosWhole[i][1]
	}
	return math.Sincos(d * math.Pi / 180)
}

// windDirection returns the direction the wind blows from, in degrees
// [0, 360), for components u, v in m/s; NaN for a calm or NaN wind.
func windDirection(u, v float64) float64 {
	if !(u*u+v*v > 0) {
		return math.NaN()
	}
	d := math.Atan2(-u, -v) * 180 / math.Pi
	if d < 0 {
		d += 360
	}
	return d
}

// TurningDeg returns the shortest signed angle from direction fromDeg to
// direction toDeg in degrees, in (−180, 180]: positive when the wind veers
// (turns clockwise, e.g. 180° → 270°), negative when it backs. NaN when
// either is NaN.
func TurningDeg(fromDeg, toDeg float64) float64 {
	d := math.Mod(toDeg-fromDeg, 360)
	switch {
	case d > 180:
		d -= 360
	case d <= -180:
		d += 360
	}
	return d
}

// windProfile holds every level with a height AGL and a usable wind,
// sorted by height, duplicate heights dropped (first kept). lu and lv are
// the wind components of each level of the sounding (indexed like its
// Levels; NaN where the level has no height or no usable wind), so that
// the thermodynamic profile reuses them.
type windProfile struct{ z, u, v, lu, lv []float64 }

func (r *Result) buildWindProfile(s *sounding.Sounding, sc *scratch) windProfile {
	m := len(s.Levels)
	buf := sc.floats(5 * m)
	lu, lv := buf[3*m:4*m], buf[4*m:]
	w := windProfile{lu: lu, lv: lv}
	z, u, v := buf[:m], buf[m:2*m], buf[2*m:3*m]
	// Levels in order of height need no sorting: the stable sort would
	// leave them as they are (equal heights included, which are dropped
	// below, the first kept); without equal heights nothing is dropped.
	n, sorted, equal := 0, true, false
	last := 0.0 // the height of the profile's last level so far (z[n−1])
	levels, hz := s.Levels[:m], r.HeightAGLM[:m]
	for i := range levels {
		ui, vi, ok := math.NaN(), math.NaN(), false
		h := hz[i]
		if !math.IsNaN(h) {
			ui, vi, ok = levelWind(&levels[i])
		}
		lu[i], lv[i] = ui, vi
		if !ok {
			continue
		}
		if n > 0 {
			sorted = sorted && !(h < last)
			equal = equal || h == last
		}
		z[n], u[n], v[n] = h, ui, vi
		last = h
		n++
	}
	w.z, w.u, w.v = z[:n:n], u[:n:n], v[:n:n]
	if !sorted {
		w = w.sortStableIn(sc)
	} else if !equal {
		return w
	}
	k := min(1, len(w.z)) // up to the first repeated height, each level stays where it is
	for k < len(w.z) && w.z[k] != w.z[k-1] {
		k++
	}
	for i := k; i < len(w.z); i++ {
		if w.z[i] == w.z[k-1] {
			continue
		}
		w.z[k], w.u[k], w.v[k] = w.z[i], w.u[i], w.v[i]
		k++
	}
	w.z, w.u, w.v = w.z[:k], w.u[:k], w.v[:k]
	return w
}

// sortStable returns the profile sorted by height, keeping levels of
// equal height in their order. Real profiles come as a few runs already
// in order (the archive's pressure levels, then its wind-only levels, each
// rising), so adjacent runs are merged, pass by pass (a natural merge
// sort: the left run's level first on equal heights, so the order is the
// one stable order, as sort.Stable gives). The result may be held in w's
// slices or in new ones; lu and lv are w's.
func (w windProfile) sortStable() windProfile { return w.sortStableIn(nil) }

// sortStableIn is sortStable with its working slices from sc. Each pass
// merges from one set of slices into the other (no copying back), so the
// result ends in w's or in the working slices.
func (w windProfile) sortStableIn(sc *scratch) windProfile {
	n := len(w.z)
	bounds := append(sc.ints(n+1), 0)
	for i := 1; i < n; i++ {
		if w.z[i] < w.z[i-1] {
			bounds = append(bounds, i)
		}
	}
	bounds = append(bounds, n)
	tmp := sc.floats(3 * n)
	src, dst := w, windProfile{z: tmp[:n:n], u: tmp[n : 2*n : 2*n], v: tmp[2*n:], lu: w.lu, lv: w.lv}
	for len(bounds) > 2 {
		next := bounds[:1]
		for r := 0; r+1 < len(bounds); r += 2 {
			lo, mid := bounds[r], bounds[r+1]
			if r+2 >= len(bounds) { // an odd run out: carried over as it is
				copy(dst.z[lo:mid], src.z[lo:mid])
				copy(dst.u[lo:mid], src.u[lo:mid])
				copy(dst.v[lo:mid], src.v[lo:mid])
				next = append(next, mid)
				break
			}
			hi := bounds[r+2]
			mergeRuns(dst.z[lo:hi], dst.u[lo:hi], dst.v[lo:hi], src.z[lo:mid], src.u[lo:mid], src.v[lo:mid],
				src.z[mid:hi], src.u[mid:hi], src.v[mid:hi])
			next = append(next, hi)
		}
		bounds = next
		src, dst = dst, src
	}
	return src
}

// mergeRuns merges the run (az, au, av) and the run (bz, bu, bv) that
// follows it, each in order of height z, into (dz, du, dv), as long as
// both together; on equal heights a's level comes first.
func mergeRuns(dz, du, dv, az, au, av, bz, bu, bv []float64) {
	au, av = au[:len(az)], av[:len(az)]
	bu, bv = bu[:len(bz)], bv[:len(bz)]
	du, dv = du[:len(dz)], dv[:len(dz)]
	i, j, k := 0, 0, 0
	for ; i < len(az) && j < len(bz) && k < len(dz); k++ {
		if bz[j] < az[i] {
			dz[k], du[k], dv[k] = bz[j], bu[j], bv[j]
			j++
		} else {
			dz[k], du[k], dv[k] = az[i], au[i], av[i]
			i++
		}
	}
	if i < len(az) { // what is left of a, then of b (one of them is empty)
		copy(dz[k:], az[i:])
		copy(du[k:], au[i:])
		copy(dv[k:], av[i:])
		k += len(az) - i
	}
	copy(dz[k:], bz[j:])
	copy(du[k:], bu[j:])
	copy(dv[k:], bv[j:])
}

func (w windProfile) Len() int           { return len(w.z) }
func (w windProfile) Less(i, j int) bool { return w.z[i] < w.z[j] }
func (w windProfile) Swap(i, j int) {
	w.z[i], w.z[j] = w.z[j], w.z[i]
	w.u[i], w.u[j] = w.u[j], w.u[i]
	w.v[i], w.v[j] = w.v[j], w.v[i]
}

// at returns u, v interpolated linearly in z at height z (m AGL); NaN
// outside the profile (no extrapolation).
func (w windProfile) at(z float64) (u, v float64) {
	n := len(w.z)
	if n == 0 || !(z >= w.z[0] && z <= w.z[n-1]) {
		return math.NaN(), math.NaN()
	}
	i := sort.SearchFloat64s(w.z, z)
	if w.z[i] == z {
		return w.u[i], w.v[i]
	}
	f := (z - w.z[i-1]) / (w.z[i] - w.z[i-1])
	return w.u[i-1] + f*(w.u[i]-w.u[i-1]), w.v[i-1] + f*(w.v[i]-w.v[i-1])
}

// TransportWind returns the mean wind speed in m/s through the layer from
// the ground to topAGLM (m AGL), for winds uMS, vMS (m/s) at heights
// zAGLM (m AGL, strictly increasing), by the given convention
// (TransportScalar or TransportVector; METHODS §5), trapezoid in z:
//
//	scalar: (1/H) ∫₀^H |V| dz     vector: |(1/H) ∫₀^H V dz|
//
// The first level stands for the ground (its wind is held from 0 m up to
// it: callers pass only profiles whose lowest wind is near the ground),
// and at topAGLM the speed (scalar) or the components (vector) are
// interpolated linearly in z. For topAGLM = 0 it returns the first
// level's speed. NaN when the profile does not reach topAGLM, when a wind
// inside the layer is NaN, when topAGLM is NaN or negative, for an unknown
// convention, or for unsorted or mismatched input.
func TransportWind(zAGLM, uMS, vMS []float64, topAGLM float64, convention TransportConvention) float64 {
	n := len(zAGLM)
	if n == 0 || len(uMS) != n || len(vMS) != n || !(topAGLM >= 0) || !(topAGLM <= zAGLM[n-1]) ||
		(convention != TransportScalar && convention != TransportVector) {
		return math.NaN()
	}
	speed := func(i int) float64 { return math.Hypot(uMS[i], vMS[i]) }
	if topAGLM <= zAGLM[0] {
		return speed(0)
	}
	var su, sv, ss float64
	zPrev, uPrev, vPrev, sPrev := 0.0, uMS[0], vMS[0], speed(0)
	for i := 0; i < n; i++ {
		if i > 0 && !(zAGLM[i] > zAGLM[i-1]) {
			return math.NaN()
		}
		z, u, v, s := zAGLM[i], uMS[i], vMS[i], speed(i)
		if z > topAGLM {
			f := (topAGLM - zPrev) / (z - zPrev)
			u, v, s, z = uPrev+f*(u-uPrev), vPrev+f*(v-vPrev), sPrev+f*(s-sPrev), topAGLM
		}
		dz := z - zPrev
		su += 0.5 * (u + uPrev) * dz
		sv += 0.5 * (v + vPrev) * dz
		ss += 0.5 * (s + sPrev) * dz
		zPrev, uPrev, vPrev, sPrev = z, u, v, s
		if z >= topAGLM {
			break
		}
	}
	if convention == TransportVector {
		return math.Hypot(su, sv) / topAGLM
	}
	return ss / topAGLM
}
