// Package qc checks radiosonde soundings before they are analysed: it gives
// every value a flag (good, suspect, bad, missing or corrected), every
// sounding a status (ok, suspect, insufficient:<reason> or
// rejected:<reason>), and a list of findings that say which check fired on
// which level and variable, and why.
//
// Check is a pure function of one sounding and a Config: it never looks at
// other soundings, so the result does not depend on what else is processed
// with it. Apply then returns a copy of the sounding in which every value
// the analysis must not use is NaN (and corrected values are replaced),
// with the level order unchanged so that per-level results stay aligned
// with the source; the analysis itself stays unaware of quality control.
// ChooseDuplicate picks one of two soundings with the same station and
// launch time by a documented precedence.
//
// The checks follow the reference in the project's METHODS.md §6: structure
// and level count, pressure order, gross limits, the archive's own
// "removed" codes, hydrostatic consistency of reported heights with the
// temperatures between them (with the residual pattern that tells a bad
// height from a bad temperature, after the NCEP complex quality control of
// Collins 2001), height order, isolated temperature spikes, superadiabatic
// layers above the surface layer, humidity at very cold temperatures,
// surface pressure against station elevation, and whether the sounding
// covers enough of the lower troposphere for boundary-layer analysis. Every
// threshold is a field of Config with its default and source.
//
// The checks run in a fixed order and each later check sees the values
// earlier ones flagged bad as missing (and corrected values as corrected),
// so one fault gives one finding: a temperature whose sign the hydrostatic
// check restored does not also show up as a spike or a superadiabatic
// layer.
package qc
