package bench

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
)

// ArchiveLevelsV1 is the mean number of levels of a sounding in the
// version 1 of the global radiosonde archive: "slightly more than 28
// million soundings with a total of 800 million levels" (NOAA National
// Climatic Data Center, Integrated Global Radiosonde Archive, Data
// Coverage page), 800/28 = 28.6. No such figure for version 2 (51 million
// soundings in its station list) was found; it is the default of the
// level-count projection, which also gives the mean level count at which
// the archive would take one hour, so that another figure can be judged.
const ArchiveLevelsV1 = 800.0 / 28.0

// LevelFit is the wall time of an ingest per sounding as a straight line in
// the sounding's level count, fitted by least squares to the fastest run of
// each of several real files with different mean level counts:
//
//	t = PerSoundingUS + PerLevelUS·L   (µs of wall time, L levels)
//
// so that an archive of thinner or thicker soundings than the measured
// ones can be projected. It is an extrapolation when the archive's mean
// level count lies outside the measured ones.
type LevelFit struct {
	Files         []string
	Levels        []float64 // mean levels a sounding of each file
	WallUS        []float64 // wall µs a sounding of each file's fastest run
	PerSoundingUS float64   // µs of wall time a sounding, whatever its levels
	PerLevelUS    float64   // µs of wall time a level
}

// FitLevels fits the line through the results of runs of different real
// files (at least two mean level counts).
func FitLevels(results []*Result) (LevelFit, error) {
	var f LevelFit
	for _, r := range results {
		best := 0.0
		for _, run := range r.Ingest {
			if run.Soundings > 0 && run.WallS > 0 {
				if us := run.WallS * 1e6 / float64(run.Soundings); best == 0 || us < best {
					best = us
				}
			}
		}
		if best == 0 || r.Soundings == 0 {
			return LevelFit{}, fmt.Errorf("%s: no ingest run measured", r.Real)
		}
		f.Files = append(f.Files, r.Real)
		f.Levels = append(f.Levels, float64(r.Levels)/float64(r.Soundings))
		f.WallUS = append(f.WallUS, best)
	}
	n := float64(len(f.Levels))
	var sx, sy, sxx, sxy float64
	for i, x := range f.Levels {
		y := f.WallUS[i]
		sx, sy, sxx, sxy = sx+x, sy+y, sxx+x*x, sxy+x*y
	}
	d := n*sxx - sx*sx
	if len(f.Levels) < 2 || !(d > 1e-9*sxx) {
		return LevelFit{}, errors.New("the level-count fit needs real files with different mean level counts")
	}
	f.PerLevelUS = (n*sxy - sx*sy) / d
	f.PerSoundingUS = (sy - f.PerLevelUS*sx) / n
	return f, nil
}

// Usable reports whether neither fitted cost is below zero: a negative
// one means the runs were too noisy for a projection by level count.
func (f LevelFit) Usable() bool { return f.PerSoundingUS >= 0 && f.PerLevelUS >= 0 }

// Hours returns the wall time in h of an ingest of soundings soundings of
// levels levels each on average.
func (f LevelFit) Hours(soundings int64, levels float64) float64 {
	return float64(soundings) * (f.PerSoundingUS + f.PerLevelUS*levels) / 1e6 / 3600
}

// LevelsWithin returns the mean level count a sounding at which soundings
// soundings take hours h of wall time: 0 when even soundings without
// levels take longer, +Inf when levels cost nothing.
func (f LevelFit) LevelsWithin(soundings int64, hours float64) float64 {
	perSounding := hours * 3600 * 1e6 / float64(soundings)
	switch {
	case perSounding <= f.PerSoundingUS:
		return 0
	case f.PerLevelUS <= 0:
		return math.Inf(1)
	}
	return (perSounding - f.PerSoundingUS) / f.PerLevelUS
}

// WriteText writes the fit and, for an archive of soundings soundings of
// levels levels each on average, its projected ingest time.
func (f LevelFit) WriteText(w io.Writer, soundings int64, levels float64) {
	fmt.Fprintln(w, "by level count (the fastest run of each file):")
	for i, name := range f.Files {
		fmt.Fprintf(w, "  %s: %.0f levels a sounding, %.1f us of wall time a sounding\n", name, f.Levels[i], f.WallUS[i])
	}
	fmt.Fprintf(w, "  fit: %.1f us a sounding + %.3f us a level\n", f.PerSoundingUS, f.PerLevelUS)
	if !f.Usable() {
		fmt.Fprintln(w, "  a cost below zero: the runs are too noisy for a projection by level count; measure again")
		return
	}
	if soundings <= 0 {
		return
	}
	fmt.Fprintf(w, "whole archive, %d soundings of %.1f levels on average: %.1f h on this machine\n", soundings, levels, f.Hours(soundings, levels))
	fmt.Fprintf(w, "it stays under 1 h while its soundings average fewer than %.0f levels\n", f.LevelsWithin(soundings, 1))
}

// Files is the measurement of several real files, one Run each, and the
// level-count fit over them (the JSON of "sondeclim bench --json" with more
// than one --real file).
type Files struct {
	Results       []*Result
	LevelFit      *LevelFit
	ArchiveLevels float64 // mean levels a sounding of the archive assumed
	ProjectedH    float64 `json:",omitempty"` // the archive's ingest at ArchiveLevels, h
}

// RunFiles runs Run for each of files (opt.Real and opt.Copies set from
// files and copies, whose last count serves the files beyond it) and fits
// the level-count line when there are several; archiveLevels is the mean
// level count of the archive's soundings the projection assumes.
func RunFiles(ctx context.Context, opt Options, files []string, copies []int, archiveLevels float64) (*Files, error) {
	if len(files) == 0 || len(copies) == 0 {
		return nil, errors.New("no files to measure")
	}
	out := &Files{ArchiveLevels: archiveLevels}
	for i, file := range files {
		opt.Real, opt.Copies = file, copies[min(i, len(copies)-1)]
		res, err := Run(ctx, opt)
		if err != nil {
			return nil, err
		}
		out.Results = append(out.Results, res)
	}
	if len(out.Results) > 1 {
		f, err := FitLevels(out.Results)
		if err != nil {
			return nil, err
		}
		out.LevelFit = &f
		if f.Usable() {
			out.ProjectedH = f.Hours(out.Results[0].ArchiveSoundings, archiveLevels)
		}
	}
	return out, nil
}

// WriteText writes each file's results and the level-count fit.
func (m *Files) WriteText(w io.Writer) {
	for i, res := range m.Results {
		if i > 0 {
			fmt.Fprintln(w)
		}
		res.WriteText(w)
	}
	if m.LevelFit != nil {
		fmt.Fprintln(w)
		m.LevelFit.WriteText(w, m.Results[0].ArchiveSoundings, m.ArchiveLevels)
	}
}
