package temp

import (
	"fmt"
	"math"
	"strconv"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// levelsOf returns the standard levels of Part A or C.
func (r *report) levelsOf() []stdLevel {
	if r.part == partC || r.part == pilotC {
		return stdC
	}
	return stdA
}

// windByIndicator applies Id: the last standard level with a wind is the
// one whose hundreds (Part A) or tens (Part C) digit of pressure is Id;
// Id 0 in Part A is 1000 hPa; "/" means no winds.
func (r *report) windByIndicator(hPa float64) bool {
	if r.ind < '0' || r.ind > '9' {
		return false
	}
	d := float64(r.ind - '0')
	if r.part == partC || r.part == pilotC {
		return hPa >= d*10
	}
	if d == 0 {
		return hPa == 1000
	}
	return hPa >= d*100
}

// plausibleNext reports whether g can follow a complete standard level
// (standard levels from index next on, tropopause, maximum wind, section
// or end of report).
func (r *report) plausibleNext(body []token, i, next int) bool {
	if i >= len(body) {
		return true
	}
	g := body[i].s
	if len(g) != 5 {
		return false
	}
	if isSection(g) {
		return true
	}
	switch g[:2] {
	case "88", "77", "66":
		return true
	}
	for _, s := range r.levelsOf()[next:] {
		if g[:2] == s.ind {
			return true
		}
	}
	return false
}

// pressureTenths reports whether the 88/77/66 and nnPPP pressures of this
// part are in tenths of hPa (Parts C and D).
func (r *report) pressureTenths() bool {
	return r.part == partC || r.part == partD || r.part == pilotC
}

// codedPressure decodes PPP: whole hPa with the thousands digit dropped, or
// tenths of hPa in Parts C and D.
func (r *report) codedPressure(ppp string) (float64, bool) {
	if !isDigits(ppp) {
		return math.NaN(), false
	}
	n, _ := strconv.Atoi(ppp)
	if r.pressureTenths() {
		return float64(n) / 10, n > 0
	}
	if n < 100 {
		n += 1000
	}
	return float64(n), true
}

// decodeStandard decodes the body of Part A or C.
func (r *report) decodeStandard(body []token) error {
	std := r.levelsOf()
	next := 0 // index in std of the next standard level allowed
	lastM, lastStdM := math.NaN(), math.NaN()
	i := 0
	for i < len(body) {
		t := body[i]
		g := t.s
		if len(g) != 5 {
			return badGroup(t, "level")
		}
		if isSection(g) {
			j, err := r.otherSection(body, i)
			if err != nil {
				return err
			}
			i = j
			continue
		}
		switch {
		case g[:2] == "99" && r.part == partA && i == 0:
			p, ok := r.codedPressure(g[2:])
			if !ok {
				return badGroup(t, "surface pressure")
			}
			l := r.newLevel(sounding.KindSurface, p, t.line)
			n, err := r.tempWind(&l, body, i+1, true)
			if err != nil {
				return err
			}
			r.levels = append(r.levels, l)
			i = n
		case g[:2] == "88":
			if g[2:] == "999" {
				i++
				continue
			}
			p, ok := r.codedPressure(g[2:])
			if !ok {
				return badGroup(t, "tropopause")
			}
			l := r.newLevel(sounding.KindSignificant, p, t.line)
			l.Tropopause = true
			n, err := r.tempWind(&l, body, i+1, true)
			if err != nil {
				return err
			}
			r.levels = append(r.levels, l)
			i = n
		case g[:2] == "77" || g[:2] == "66":
			i++
			if g[2:] == "999" {
				continue
			}
			p, ok := r.codedPressure(g[2:])
			if !ok {
				return badGroup(t, "maximum wind")
			}
			l := r.newLevel(sounding.KindSignificant, p, t.line)
			if i < len(body) {
				if err := r.setWind(&l, body[i]); err != nil {
					return err
				}
				i++
			}
			if i < len(body) && len(body[i].s) == 5 && body[i].s[0] == '4' && !isSection(body[i].s) {
				i++ // 4vbvbvava wind shear
			}
			r.levels = append(r.levels, l)
		default:
			k := -1
			for j := next; j < len(std); j++ {
				if g[:2] == std[j].ind {
					k = j
					break
				}
			}
			if k < 0 {
				return badGroup(t, "standard level")
			}
			next = k + 1
			s := std[k]
			l := r.newLevel(sounding.KindStandard, s.hPa, t.line)
			if isDigits(g[2:]) {
				hhh, _ := strconv.Atoi(g[2:])
				l.HeightM = s.height(hhh, lastM, lastStdM)
				lastM, lastStdM = l.HeightM, s.stdM
				l.Status[sounding.VarHeight] = sounding.Reported
			}
			wind := r.windByIndicator(s.hPa)
			// Do not trust Id alone: look at what follows the candidate
			// wind group.
			a, b := r.plausibleNext(body, i+2, next), r.plausibleNext(body, i+3, next)
			if wind && a && !b {
				wind = false
			} else if !wind && !a && b {
				wind = true
			}
			n, err := r.tempWind(&l, body, i+1, wind)
			if err != nil {
				return err
			}
			r.levels = append(r.levels, l)
			i = n
		}
	}
	return nil
}

// tempWind reads TTTaDD at body[i] and, when wind is true, dddff after it;
// it returns the index of the next group.
func (r *report) tempWind(l *level, body []token, i int, wind bool) (int, error) {
	if i < len(body) {
		if err := setTemp(l, body[i]); err != nil {
			return 0, err
		}
		i++
	}
	if wind && i < len(body) {
		if err := r.setWind(l, body[i]); err != nil {
			return 0, err
		}
		i++
	}
	return i, nil
}

// validNN reports whether nn is a Part B/D level number (00, 11, …, 99).
func validNN(nn string) bool {
	return len(nn) == 2 && nn[0] == nn[1] && nn[0] >= '0' && nn[0] <= '9'
}

// decodeSignificant decodes the body of Part B or D: nnPPP TTTaDD levels,
// then nnPPP dddff wind levels after 21212.
func (r *report) decodeSignificant(body []token) error {
	winds := false
	i := 0
	for i < len(body) {
		t := body[i]
		g := t.s
		if len(g) != 5 {
			return badGroup(t, "level")
		}
		if g == "21212" {
			winds = true
			i++
			continue
		}
		if isSection(g) {
			j, err := r.otherSection(body, i)
			if err != nil {
				return err
			}
			i = j
			continue
		}
		if !validNN(g[:2]) {
			return badGroup(t, "significant level")
		}
		p, ok := r.codedPressure(g[2:])
		if !ok && g[2:] == "///" {
			i += 2 // level without pressure: unusable, skip it
			continue
		}
		if !ok {
			return badGroup(t, "significant level pressure")
		}
		kind := sounding.KindSignificant
		if g[:2] == "00" && r.part == partB {
			kind = sounding.KindSurface
		}
		l := r.newLevel(kind, p, t.line)
		i++
		if i < len(body) {
			var err error
			if winds {
				err = r.setWind(&l, body[i])
			} else {
				err = setTemp(&l, body[i])
			}
			if err != nil {
				return err
			}
			i++
		}
		r.levels = append(r.levels, l)
	}
	return nil
}

// pilotHeight decodes the height indicator of a PILOT Part B or D group:
// 9tn… gives altitudes of 10·tn + u units, 1tn… of 100 + 10·tn + u units
// (WMO FM 32, section 4, from memory; the 1tn form is checked against the
// same stations' TTCC winds in TestPilotPartD). base is the altitude of
// u = 0 in units.
func pilotHeight(g string) (base int, ok bool) {
	if len(g) != 5 || g[1] < '0' || g[1] > '9' {
		return 0, false
	}
	tn := int(g[1] - '0')
	switch g[0] {
	case '9':
		return 10 * tn, true
	case '1':
		return 100 + 10*tn, true
	}
	return 0, false
}

// pilotOtherHeight reports a height group with indicator 8, which some
// North American stations send above 99 units in Part D (86…, 87… in the
// 2022-07-13 bulletins). Its unit could not be established (100 + u units
// of 1000 ft and 10·tn + u units of 500 m both fit the TTCC 10-hPa winds),
// so those levels, all above 30 km, are left out with a note.
func pilotOtherHeight(g string) bool {
	return len(g) == 5 && g[0] == '8' && g[1] >= '0' && g[1] <= '9'
}

// pilotPositions counts the height positions u1u2u3 that carry a digit.
func pilotPositions(g string) int {
	n := 0
	for i := 2; i < 5; i++ {
		if g[i] >= '0' && g[i] <= '9' {
			n++
		}
	}
	return n
}

// decodePilot decodes PILOT Part B or D: a height group (see pilotHeight)
// followed by up to three dddff, altitudes in unitM above mean sea level.
// The surface entry (9tn with tn = 0, u = 0 or "/") is skipped.
func (r *report) decodePilot(body []token, unitM float64) error {
	i := 0
	for i < len(body) {
		t := body[i]
		g := t.s
		if isSection(g) {
			j, err := r.otherSection(body, i)
			if err != nil {
				return err
			}
			i = j
			continue
		}
		base, ok := pilotHeight(g)
		if !ok && r.part == pilotD && pilotOtherHeight(g) {
			r.partial = &lineError{t.line, fmt.Errorf("%w: %s %s: levels from group %s on (indicator 8, unit unknown, above 30 km) left out; %d levels below kept",
				ingest.ErrPartlyDecoded, "PPDD", r.station, ingest.Quote(g), len(r.levels))}
			return nil
		}
		if !ok {
			return badGroup(t, "height")
		}
		tn := int(g[1] - '0')
		want := pilotPositions(g)
		i++
		// Count the wind groups up to the next height group. Three winds
		// fill the three positions; fewer go to the positions with a digit.
		// A wind group begins with 0–3 (direction 000–360) or 99
		// (variable): 4–8 and a 9 not followed by 9 start a height group
		// or a section; a group beginning with 1 or 99 can be either, and
		// is a height group once the positions given are filled.
		c := 0
		for c < 3 && i+c < len(body) {
			w := body[i+c].s
			if len(w) != 5 {
				break
			}
			if _, h := pilotHeight(w); isSection(w) || pilotOtherHeight(w) || w[0] >= '4' && w[0] <= '8' || w[0] == '9' && w[1] != '9' || h && c >= want {
				break
			}
			c++
		}
		all := c == 3
		for pos := 2; pos < 5 && c > 0; pos++ {
			u := g[pos]
			surface := base == 0 && tn == 0 && (u == '0' || (u == '/' && pos == 2))
			if u == '/' && !surface && !all {
				continue
			}
			w := body[i]
			i++
			c--
			if surface || u == '/' {
				continue // surface wind is in Part A; unknown height
			}
			l := r.newLevel(sounding.KindWindOnly, math.NaN(), w.line)
			l.HeightM = float64(base+int(u-'0')) * unitM
			l.Status[sounding.VarHeight] = sounding.Reported
			if err := r.setWind(&l, w); err != nil {
				return err
			}
			r.levels = append(r.levels, l)
		}
		// Extra groups before the next height group are malformed.
		if c > 0 {
			return badGroup(body[i], "wind")
		}
	}
	return nil
}

// decodePilotStandard decodes PILOT Part A or C: groups 44nP1P1 or
// 55nP1P1 (n winds follow, for the standard isobaric surfaces from P1P1
// upwards; WMO FM 32 section 2, from memory), then the maximum wind
// (77PmPmPm or 66PmPmPm, dddff, optional 4vbvbvava) as in TEMP. The
// levels are wind-only levels at the standard pressures.
func (r *report) decodePilotStandard(body []token) error {
	std := r.levelsOf()
	i := 0
	for i < len(body) {
		t := body[i]
		g := t.s
		if len(g) != 5 {
			return badGroup(t, "level")
		}
		if isSection(g) {
			j, err := r.otherSection(body, i)
			if err != nil {
				return err
			}
			i = j
			continue
		}
		switch g[:2] {
		case "44", "55":
			if g[2] < '1' || g[2] > '9' {
				return badGroup(t, "standard levels")
			}
			n := int(g[2] - '0')
			k := -1
			for j, s := range std {
				if s.ind == g[3:] {
					k = j
					break
				}
			}
			if k < 0 {
				return badGroup(t, "standard level")
			}
			i++
			for j := 0; j < n && i < len(body); j++ {
				if k+j >= len(std) {
					return badGroup(body[i], "standard level")
				}
				l := r.newLevel(sounding.KindStandard, std[k+j].hPa, body[i].line)
				if err := r.setWind(&l, body[i]); err != nil {
					return err
				}
				r.levels = append(r.levels, l)
				i++
			}
		case "77", "66":
			i++
			if g[2:] == "999" {
				continue
			}
			p, ok := r.codedPressure(g[2:])
			if !ok {
				return badGroup(t, "maximum wind")
			}
			l := r.newLevel(sounding.KindSignificant, p, t.line)
			if i < len(body) {
				if err := r.setWind(&l, body[i]); err != nil {
					return err
				}
				i++
			}
			if i < len(body) && len(body[i].s) == 5 && body[i].s[0] == '4' && !isSection(body[i].s) {
				i++ // 4vbvbvava wind shear
			}
			r.levels = append(r.levels, l)
		default:
			return badGroup(t, "standard levels")
		}
	}
	return nil
}
