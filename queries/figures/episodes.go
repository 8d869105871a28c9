package figures

import (
	"context"
	"database/sql"
	"fmt"
	"image/color"
	"strings"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/queries"
)

// CalendarDay is one day inside an episode of one rule.
type CalendarDay struct {
	Rule int       // index into EpisodeCalendar.Rules
	Date time.Time // local solar date
	Met  bool      // false: a missing day kept inside by the gap rule
}

// EpisodeCalendar holds the days inside episodes of a station, by rule.
type EpisodeCalendar struct {
	Station             Station
	Rules               []string // rule names, in the order of analyze.BuiltinCriteria
	Days                []CalendarDay
	FirstYear, LastYear int // calendar years of the station's days with soundings
}

// LoadEpisodeCalendar reads the episode days of station (building the
// episode tables with defaults unless they exist, queries.EnsureEpisodes).
func LoadEpisodeCalendar(ctx context.Context, db *sql.DB, st Station) (*EpisodeCalendar, error) {
	by, err := loadEpisodeCalendars(ctx, db, st.ID)
	if err != nil {
		return nil, err
	}
	c := by[st.ID]
	if c == nil {
		c = newEpisodeCalendar()
	}
	c.Station = st
	return c, nil
}

// newEpisodeCalendar returns an empty calendar with the built-in rules.
func newEpisodeCalendar() *EpisodeCalendar {
	c := &EpisodeCalendar{}
	for _, r := range analyze.BuiltinCriteria() {
		c.Rules = append(c.Rules, r.Name)
	}
	return c
}

// loadEpisodeCalendars reads the calendars of station ("" for every
// station) by station id, with one query for the years and one for the
// days whatever the number of stations. Station is left unset.
func loadEpisodeCalendars(ctx context.Context, db *sql.DB, station string) (map[string]*EpisodeCalendar, error) {
	if err := queries.EnsureEpisodes(ctx, db); err != nil {
		return nil, err
	}
	idx := map[string]int{}
	for i, r := range newEpisodeCalendar().Rules {
		idx[r] = i
	}
	out := map[string]*EpisodeCalendar{}
	get := func(id string) *EpisodeCalendar {
		if out[id] == nil {
			out[id] = newEpisodeCalendar()
		}
		return out[id]
	}
	fail := func(err error) error { return fmt.Errorf("episode calendar%s: %w", of(station), err) }
	years, err := db.QueryContext(ctx, "SELECT station_id, min(year) AS first_year, max(year) AS last_year FROM days "+
		"WHERE ($1 = '' OR station_id = $1) GROUP BY station_id", station)
	if err != nil {
		return nil, fail(err)
	}
	defer years.Close()
	var id string
	var first, last int
	var ysc queries.Scanner
	ysc.Str("station_id", &id)
	ysc.Int("first_year", &first)
	ysc.Int("last_year", &last)
	for years.Next() {
		if err := ysc.Scan(years); err != nil {
			return nil, fail(err)
		}
		c := get(id)
		c.FirstYear, c.LastYear = first, last
	}
	if err := years.Err(); err != nil {
		return nil, fail(err)
	}
	rows, err := db.QueryContext(ctx, "SELECT station_id, criterion, local_date, day_met(status) AS met FROM episode_days "+
		"WHERE ($1 = '' OR station_id = $1) ORDER BY station_id, local_date, criterion", station)
	if err != nil {
		return nil, fail(err)
	}
	defer rows.Close()
	var name string
	var d CalendarDay
	var sc queries.Scanner
	sc.Str("station_id", &id)
	sc.Str("criterion", &name)
	sc.Time("local_date", &d.Date)
	sc.Bool("met", &d.Met)
	for rows.Next() {
		if err := sc.Scan(rows); err != nil {
			return nil, fail(err)
		}
		i, ok := idx[name]
		if !ok {
			continue
		}
		d.Rule, d.Date = i, d.Date.UTC()
		c := get(id)
		c.Days = append(c.Days, d)
	}
	if err := rows.Err(); err != nil {
		return nil, fail(err)
	}
	return out, nil
}

// monthPosition places a date on the month axis of monthTicks: month m
// spans m−0.5 to m+0.5, days evenly inside it.
func monthPosition(d time.Time) (x0, x1 float64) {
	n := float64(time.Date(d.Year(), d.Month()+1, 0, 0, 0, 0, 0, time.UTC).Day())
	x0 = float64(d.Month()) - 0.5 + float64(d.Day()-1)/n
	return x0, x0 + 1/n
}

// EpisodeCalendarFigure draws a calendar of episode days: one band per
// year (earliest at the top), one stripe per rule inside it, a mark for
// every day inside an episode (pale for missing days kept inside by the
// gap rule).
func EpisodeCalendarFigure(c *EpisodeCalendar) *Figure {
	title := "Days inside episodes, by year and rule\n" + c.Station.Label()
	p := newPlot(title, "month", "year")
	s := &shapes{}
	n := float64(len(c.Rules))
	stripe := func(year, rule int) (y0, y1 float64) {
		top := -float64(year) + 0.42
		h := 0.84 / n
		return top - float64(rule+1)*h + 0.1*h, top - float64(rule)*h - 0.1*h
	}
	for _, d := range c.Days {
		x0, x1 := monthPosition(d.Date)
		y0, y1 := stripe(d.Date.Year(), d.Rule)
		fill := hourColor(d.Rule)
		if !d.Met {
			r, g, b, _ := fill.RGBA()
			fill = color.NRGBA{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8), 0x50}
		}
		s.Rects = append(s.Rects, rect{X0: x0, X1: x1, Y0: y0, Y1: y1, Fill: fill})
	}
	p.Add(s)
	p.X.Min, p.X.Max = 0.5, 12.5
	p.X.Tick.Marker = monthTicks()
	first, last := c.FirstYear, c.LastYear
	if first == 0 {
		first, last = 2000, 2000
	}
	p.Y.Min, p.Y.Max = -float64(last)-0.5, -float64(first)+0.5
	var ticks plot.ConstantTicks
	step := 1 + (last-first)/25
	for y := first; y <= last; y++ {
		lbl := ""
		if (y-first)%step == 0 {
			lbl = fmt.Sprint(y)
		}
		ticks = append(ticks, plot.Tick{Value: -float64(y), Label: lbl})
	}
	p.Y.Tick.Marker = ticks
	if len(c.Days) == 0 {
		p.Add(&note{FX: 0.5, FY: 0.5, Text: "no episodes", Style: centred(textStyle(11))})
	}
	names := []string{"blue", "orange", "green", "purple", "grey"}
	var key []string
	short := map[string]string{analyze.CriterionPersistentInversion: "persistent inversion",
		analyze.CriterionDeepStable: "deep stable layer", analyze.CriterionHeatDeficit: "heat deficit",
		analyze.CriterionPollutionPotential: "Holzworth potential"}
	for i, r := range c.Rules {
		if v, ok := short[r]; ok {
			r = v
		}
		key = append(key, fmt.Sprintf("%s (%s)", r, names[i%len(names)]))
	}
	caption := "Stripes per year, top down: " + strings.Join(key, ", ") +
		". A mark per local day inside an episode; pale: a missing day kept inside."
	cp := withCaption(p, caption)
	height := 3*vg.Inch + vg.Length(last-first+1)*0.32*vg.Inch
	if height > 20*vg.Inch {
		height = 20 * vg.Inch
	}
	return &Figure{
		Name:  safeName(c.Station.ID + "-episode-calendar"),
		Title: strings.ReplaceAll(title, "\n", ", "),
		Width: 10 * vg.Inch, Height: height,
		draw: cp.draw, captioned: cp,
	}
}
