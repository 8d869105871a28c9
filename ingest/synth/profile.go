package synth

import (
	"math"
	"math/rand/v2"
)

// knot is a point of the designed profile: temperature and dewpoint vary
// linearly in ln p between knots.
type knot struct {
	pPa   float64 // pressure, Pa
	zAGLM float64 // design height above ground, m
	tK    float64 // temperature, K
	tdK   float64 // dewpoint, K
	trop  bool    // first tropopause
}

// profile builds a sounding bottom-up as a list of knots.
type profile struct {
	k []knot
}

func (pr *profile) reset(pSfcPa, tK, tdK float64) {
	pr.k = append(pr.k[:0], knot{pPa: pSfcPa, tK: tK, tdK: min(tdK, tK)})
}

func (pr *profile) last() knot { return pr.k[len(pr.k)-1] }

// next returns the pressure dz metres above the last knot for a layer whose
// top has temperature tK and mixing ratio w, with the hypsometric equation
// and the mean of the end-point virtual temperatures (METHODS §1.6).
func (pr *profile) next(dz, tK, w float64) float64 {
	l := pr.last()
	tv1 := virtualTemperatureW(l.tK, mixingRatio(l.tdK, l.pPa))
	tv2 := virtualTemperatureW(tK, w)
	return l.pPa * math.Exp(-g0MPerS2*dz/(rdJPerKgK*0.5*(tv1+tv2)))
}

// addDPD appends a knot dz metres up with temperature tK and dewpoint
// depression dpdK.
func (pr *profile) addDPD(dz, tK, dpdK float64) {
	l := pr.last()
	tdK := tK - max(dpdK, 0)
	p := pr.next(dz, tK, mixingRatio(tdK, l.pPa))
	pr.k = append(pr.k, knot{pPa: p, zAGLM: l.zAGLM + dz, tK: tK, tdK: tdK})
}

// addW appends a knot dz metres up with temperature tK and mixing ratio w.
func (pr *profile) addW(dz, tK, w float64) {
	l := pr.last()
	p := pr.next(dz, tK, w)
	pr.k = append(pr.k, knot{pPa: p, zAGLM: l.zAGLM + dz, tK: tK, tdK: min(dewpointFromW(w, p), tK)})
}

// addThetaW appends a knot dz metres up on the dry adiabat θ (K) with
// mixing ratio w: T = θ (p/p0)^κ (METHODS §1.2).
func (pr *profile) addThetaW(dz, theta, w float64) {
	l := pr.last()
	tEst := theta*math.Pow(l.pPa/p0Pa, kappa) - dryLapseKPerM*dz
	p := pr.next(dz, tEst, w)
	t := theta * math.Pow(p/p0Pa, kappa)
	pr.k = append(pr.k, knot{pPa: p, zAGLM: l.zAGLM + dz, tK: t, tdK: min(dewpointFromW(w, p), t)})
}

func lerp(a, b, s float64) float64 { return a + (b-a)*s }

func clamp(x, lo, hi float64) float64 { return min(max(x, lo), hi) }

func uniform(r *rand.Rand, lo, hi float64) float64 { return lo + (hi-lo)*r.Float64() }

// eveningInversion decides whether a late-afternoon sounding released with
// the sun sunDeg degrees above the horizon starts with a shallow surface
// inversion: the valley floor loses the direct sun some minutes before the
// astronomical sunset (shading by the valley's sides) and radiative
// cooling then inverts the lowest tens of metres within the first hour
// (the scenario's own choice, no source): probability 0.7 with the sun
// below 2°, 0.3 from 2° to 5°, none higher.
func eveningInversion(r *rand.Rand, sunDeg float64) bool {
	switch {
	case sunDeg < 2:
		return r.Float64() < 0.7
	case sunDeg < 5:
		return r.Float64() < 0.3
	}
	return false
}

// afternoon designs a late-afternoon sounding: a well-mixed layer of depth
// 300–3200 m (deeper in summer), a capping inversion with dry air above,
// then the free troposphere. s is the season (0 mid-winter, 1 mid-summer);
// sunDeg the sun's elevation at release, degrees. In a cold-air pool the
// lowest 150–350 m stay inverted by 1.5–4 K below the mixed layer, which
// then starts at the pool's top. Near or after sunset (eveningInversion)
// the lowest 30–120 m are inverted by 0.5–4.5 K (about 3 K in mid-winter)
// instead: the night's radiation inversion beginning under the day's mixed
// layer.
func (pr *profile) afternoon(r *rand.Rand, cl climate, s, anomK, pSfcPa, elevM, h float64, pool bool, sunDeg float64) (tropAGLM float64) {
	tS := lerp(cl.tmaxWinter, cl.tmaxSummer, s) + anomK + zeroCK
	poolTop, poolK := 0.0, 0.0
	switch {
	case pool:
		poolTop, poolK = uniform(r, 150, 350), uniform(r, 1.5, 4)
		h = max(h, poolTop+200)
	case eveningInversion(r, sunDeg):
		poolTop, poolK = uniform(r, 30, 120), lerp(3, 1.5, s)*uniform(r, 0.5, 1.5)
		h = max(h, poolTop+200)
	}
	inverted := poolTop > 0
	w := lerp(cl.wWinter, cl.wSummer, s) * math.Exp(0.2*r.NormFloat64())
	// Keep the lifting condensation level (about 122 m per kelvin of
	// dewpoint depression; common practice, no source) above the mixed
	// layer, so that the mixed layer stays unsaturated.
	td := dewpointFromW(w, pSfcPa)
	if minDPD := h/122 + 1.5; td > tS-minDPD {
		td = tS - minDPD
		w = mixingRatio(td, pSfcPa)
	}
	theta := tS * math.Pow(p0Pa/pSfcPa, kappa)
	if inverted {
		// The mixed layer's adiabat at the pool's top, and the colder
		// surface below it.
		tTop := tS - dryLapseKPerM*poolTop
		tSfc := tTop - poolK
		pr.reset(pSfcPa, tSfc, min(td, tSfc-1))
		pr.addDPD(poolTop, tTop, tTop-min(td, tTop-1)+uniform(r, 0, 1))
	} else {
		pr.reset(pSfcPa, tS, td)
	}
	for _, f := range [...]float64{0.05, 0.3, 0.55, 0.8} {
		if z := h * f; !inverted || z > pr.last().zAGLM+20 {
			pr.addThetaW(z-pr.last().zAGLM, theta+0.08*r.NormFloat64(), w*(1+0.01*r.NormFloat64()))
		}
	}
	pr.addThetaW(h-pr.last().zAGLM, theta, w)
	top := pr.last()
	pr.addDPD(uniform(r, 80, 300), top.tK+uniform(r, 1, 4), top.tK-top.tdK+uniform(r, 6, 15))
	return pr.freeTroposphere(r, s, elevM)
}

// morning designs a pre-dawn sounding: a surface-based radiation inversion
// (probability 85 % in mid-winter to 65 % in mid-summer: clear, calm
// nights on a high plain) or, on windy or overcast nights, a mechanically
// mixed surface layer 200–500 m deep, 2–4 K cooler in θ than the residual
// layer and joined to it by a 100 m stable step; then the previous day's
// residual layer, a weak inversion at its top, then the free troposphere.
//
// In a cold-air pool the surface inversion is always present.
func (pr *profile) morning(r *rand.Rand, cl climate, s, anomK, pSfcPa, elevM, h float64, pool bool) (tropAGLM float64) {
	// Above the night's surface layer lies the residual layer: what is
	// left of the mixed layer of the day's afternoon (depth h, drawn once
	// per local day and shared with the afternoon sounding), cooled by
	// 1–3 K over the night, so that today's heating mixes up through it to
	// the cap as the Holzworth construction assumes. The surface layer is
	// built down from it: the night's cooling is what makes the surface
	// inversion, so the dawn temperature follows from the inversion's
	// strength and depth (and the diurnal range emerges).
	tAft := lerp(cl.tmaxWinter, cl.tmaxSummer, s) + anomK + zeroCK
	thetaR := tAft*math.Pow(p0Pa/pSfcPa, kappa) - uniform(r, 1, 3)
	tR := thetaR * math.Pow(pSfcPa/p0Pa, kappa) // at the surface pressure
	dpd := uniform(r, 0.3, 3)
	if pool || r.Float64() < lerp(0.85, 0.65, s) {
		depth := clamp(lerp(350, 220, s)*math.Exp(0.35*r.NormFloat64()), 60, 900)
		dT := clamp(lerp(6, 5, s)*math.Exp(0.4*r.NormFloat64()), 0.8, 15)
		tS := tR - dT - dryLapseKPerM*depth
		pr.reset(pSfcPa, tS, tS-dpd)
		pr.addDPD(0.3*depth, tS+0.6*dT, dpd+uniform(r, 0, 1.5))
		pr.addDPD(0.7*depth, tS+dT, dpd+uniform(r, 1, 5))
	} else {
		// Windy or overcast: the night's cooling is mixed through a
		// near-neutral layer (θ 2–4 K below the residual layer's, rising
		// 0–0.4 K through it), under a 100 m stable step up to the
		// residual layer.
		dz := uniform(r, 200, 500)
		thetaM := thetaR - uniform(r, 2, 4)
		tS := thetaM * math.Pow(pSfcPa/p0Pa, kappa)
		pr.reset(pSfcPa, tS, tS-dpd)
		w := mixingRatio(tS-dpd, pSfcPa)
		pr.addThetaW(dz, thetaM+uniform(r, 0, 0.4), w)
		l := pr.last()
		pr.addDPD(100, l.tK-dryLapseKPerM*100+(thetaR-thetaM), l.tK-l.tdK+uniform(r, 0, 2))
	}
	l := pr.last()
	w := mixingRatio(l.tdK, l.pPa)
	zr := max(l.zAGLM+200, h)
	pr.addThetaW((zr-l.zAGLM)/2, thetaR+0.1*r.NormFloat64(), w)
	pr.addThetaW(zr-pr.last().zAGLM, thetaR+0.2, w)
	top := pr.last()
	pr.addDPD(uniform(r, 80, 250), top.tK+uniform(r, 0.5, 2.5), top.tK-top.tdK+uniform(r, 5, 15))
	return pr.freeTroposphere(r, s, elevM)
}

func (pr *profile) freeTroposphere(r *rand.Rand, s, elevM float64) (tropAGLM float64) {
	z := pr.last().zAGLM
	ztrop := max(lerp(10000, 12200, s)+400*r.NormFloat64()-elevM, z+2000)
	zsub := math.Inf(1)
	if r.Float64() < 0.5 {
		zsub = z + uniform(r, 1000, 3000)
	}
	drying := 2 // layers above an inversion in which the air keeps drying
	dpdMean := clamp(14+5*r.NormFloat64(), 5, 30)
	for z < ztrop-1 {
		l := pr.last()
		dpd := l.tK - l.tdK
		if z+450 > zsub {
			if d := zsub - z; d > 50 {
				pr.addDPD(d, l.tK-0.0065*d, dpd)
				l = pr.last()
			}
			pr.addDPD(uniform(r, 100, 250), l.tK+uniform(r, 0.5, 3), dpd+uniform(r, 5, 12))
			zsub = math.Inf(1)
			drying = 2
			z = pr.last().zAGLM
			continue
		}
		dz := uniform(r, 140, 300)
		if z+dz > ztrop-100 {
			dz = ztrop - z
		}
		lapse := clamp(6.5+0.9*r.NormFloat64(), 4.5, 8.5) / 1000
		if drying > 0 {
			dpd += uniform(r, 0.5, 3)
			drying--
		} else {
			dpd = clamp(dpd+0.2*(dpdMean-dpd)+1.5*r.NormFloat64(), 1, 35)
		}
		pr.addDPD(dz, l.tK-lapse*dz, dpd)
		z = pr.last().zAGLM
	}
	pr.k[len(pr.k)-1].trop = true
	ptop := uniform(r, 9200, 9900)
	for {
		l := pr.last()
		dz := uniform(r, 350, 800)
		lapse := uniform(r, -2.5, 1) / 1000
		dpd := clamp(l.tK-l.tdK+0.5+1.5*r.NormFloat64(), 1, 35)
		if l.pPa*math.Exp(-g0MPerS2*dz/(rdJPerKgK*l.tK)) < 10200 {
			dz = rdJPerKgK * l.tK / g0MPerS2 * math.Log(l.pPa/ptop)
			pr.addDPD(dz, l.tK-lapse*dz, dpd)
			pr.k[len(pr.k)-1].pPa = ptop // exactly, whatever the virtual-temperature correction
			return ztrop
		}
		pr.addDPD(dz, l.tK-lapse*dz, dpd)
	}
}

// mixedDepth draws the depth of a day's afternoon mixed layer, m: about
// 500 m in mid-winter to 2300 m in mid-summer, log-normally spread
// (the scenario's own choice).
func mixedDepth(r *rand.Rand, s float64) float64 {
	return clamp(lerp(500, 2300, s)*math.Exp(0.22*r.NormFloat64()), 300, 3200)
}
