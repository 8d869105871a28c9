// Package synth writes deterministic, invented radiosonde archives for
// demonstrations, tests and benchmarks.
//
// # Scenario
//
// The default station, "Marrow Vale" (id ZZXSYN00001), is an invented inland
// valley station on a high plain: 42.37° N, 101.85° W, 560 m above sea
// level. Winters are cold (late-afternoon temperatures near −2 °C, dawn near
// −12 °C in December–February) and summers hot (near 28 °C in the late
// afternoon and 19 °C at dawn in June–August; a diurnal range of typically
// 6–12 K). Local mean solar time is UTC − 6.8 h. Like the real archive, the
// 00 UTC sounding is released on the previous UTC day, at 23:00–23:40 UTC:
// 16:15–16:55 local solar time, late afternoon of the local day, with the
// sun well up from March to October and near or below the horizon from
// late November to January (sunset near 16:30 at the winter solstice). The
// 12 UTC sounding is released at 11:00–11:40 UTC, 04:15–04:55 local solar
// time: before dawn most of the year, at about sunrise in June and July.
//
// Every morning sounding starts with a surface-based radiation inversion
// with a probability that falls from 85 % in mid-winter to 65 % in
// mid-summer; winter inversions are deeper (typically 200–600 m) and
// stronger (typically 3–9 K) than summer ones (130–320 m, 3–7 K). On the
// other (windy or overcast) mornings a mechanically mixed surface layer
// 200–500 m deep, 2–4 K cooler in potential temperature than the layer
// above, lies under a 100 m stable step. Above lies a residual layer
// (constant θ, 1–3 K below the coming afternoon's mixed-layer θ) as deep as
// the same local day's afternoon mixed layer, capped by a weak elevated
// inversion: the morning and afternoon soundings of one day agree, as the
// Holzworth afternoon construction (morning profile lifted from the day's
// maximum temperature) assumes. The dawn surface temperature follows from
// the residual layer and the night's surface layer, so the diurnal range
// is an outcome. Every afternoon sounding has a well-mixed layer (θ and
// mixing ratio constant) whose depth grows from about 400–850 m in winter
// to 1600–3000 m in summer, capped by an inversion with much drier air
// above. When the sun is within 2° of the horizon or below it at release
// (winter), the valley floor is already shaded and cooling: 70 % of those
// afternoon soundings (30 % with the sun 2–5° up) start with a shallow
// surface inversion, 30–120 m deep and about 3 K strong, under the day's
// mixed layer. About half of the soundings carry a further subsidence
// inversion 1–3 km higher, again with the dewpoint depression increasing
// upward across it. The free troposphere cools at about 6.5 K/km (varying
// from layer to layer) up to a tropopause near 10 km in winter and 12 km in
// summer; above it the temperature is nearly constant up to the top of the
// sounding just above 100 hPa. Winds strengthen with height and veer
// towards the west, up to a jet near the tropopause that is stronger in
// winter.
//
// In the cold half of winter (about late November to late March), high
// pressure can start a cold-air pool lasting 2–7 days: its mornings always
// carry a surface-based inversion and its afternoons keep the lowest
// 150–350 m inverted by 1.5–4 K under a shallow mixed layer, so the valley
// has multi-day episodes in winter and none in summer.
//
// Day-to-day weather is an autoregressive temperature and pressure anomaly,
// so consecutive soundings are correlated. The archive is clean by default:
// no missing soundings, no values removed by quality control, no
// inconsistent levels.
//
// Other stations ([StationAt] with index ≥ 1, chosen through
// [Config.StationIndex]) are invented in the same way on the same plain:
// latitude 36–48° N, longitude 112–92° W (so 00 UTC is always late
// afternoon, near or after sunset in winter, and 12 UTC before dawn or
// near sunrise), elevation 300–900 m, with a
// climate shifted by latitude and elevation. Their ids are ZZXSYN followed by
// five digits; the "ZZX" prefix followed by "SYN" belongs to no real station
// in the version-2 station list.
//
// # Output
//
// [Write] produces a station file in the archive's version-2 text format:
// one 71-character header per sounding, then one 52-character record per
// level. Each sounding lists the surface, the standard pressure levels that
// lie above ground (925 … 100 hPa), significant levels at every change of
// lapse rate or humidity, and a top level between 92 and 99 hPa, all with
// temperature, dewpoint depression and wind; then wind-only height levels
// every 300 m up to 3000 m above ground: about 60–90 records in all
// (55 at the fewest). Relative humidity is not reported
// (−9999), as in messages relayed over the global telecommunication system.
// Heights are reported at the surface and the standard levels only
// (−9999 at significant levels); they are computed from the reported
// (rounded) pressures, temperatures and dewpoints with the hypsometric
// equation, using virtual temperature, so the file is hydrostatically
// consistent to the 1 m reporting resolution. Temperatures carry the
// archive's "B" climatology-check flag, the surface pressure a "B" pressure
// flag and standard-level heights a "B" height flag, like real records.
// The data-source code in the header is "synth-v1" for both pressure and
// non-pressure levels, so synthetic data can never pass for observed data.
//
// # Determinism
//
// All randomness comes from a PCG generator seeded with [Config.Seed] and
// the station index, drawn in a fixed order, and every value is rounded to
// its reporting resolution as soon as it is produced. The same Config gives
// the same bytes on every run. Across platforms the output is the same
// unless a last-bit difference in the math library or a fused multiply–add
// happens to move a value across a rounding boundary, which is vanishingly
// rare.
package synth
