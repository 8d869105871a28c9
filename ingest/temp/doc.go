// Package temp decodes WMO FM 35 TEMP upper-air messages (format name
// "wmo-temp") into canonical soundings.
//
// The reader accepts a raw bulletin stream as distributed on the Global
// Telecommunication System (each product framed by SOH 0x01 … ETX 0x03, a
// sequence number, an abbreviated heading such as "USUS50 KWBC 130000 RRA",
// lines ending CR CR LF, several reports per bulletin each ended by "=") as
// well as plain text holding one or more reports.
//
// Decoded parts:
//
//   - Part A (TTAA; also UUAA, IIAA, XXAA): surface, standard isobaric
//     surfaces 1000–100 hPa, tropopause (88) and maximum wind (77/66), and
//     the launch time of section 31313.
//   - Part B (TTBB): significant temperature/humidity levels, significant
//     winds by pressure (21212) and section 31313.
//   - Part C (TTCC) and Part D (TTDD): the same above 100 hPa; Part D
//     pressures are in tenths of hPa.
//   - PILOT Parts A and C (PPAA, PPCC): winds at the standard isobaric
//     surfaces (groups 44nP1P1 or 55nP1P1) and the maximum wind.
//   - PILOT Parts B and D (PPBB, PPDD): winds at heights, stored as
//     wind-only levels (see the assumption on units below); height groups
//     9tnu1u2u3 (10·tn + u units) and 1tnu1u2u3 (100 + 10·tn + u units).
//     Groups with indicator 8, which some stations send above 30 km, are
//     not decoded: the levels below them are kept and the report is
//     returned with a remark (ingest.ErrPartlyDecoded).
//
// Regional sections (51515 … 59595 and 61616 …) and the cloud group of
// 41414 are skipped. Reports marked NIL are dropped without an error;
// reports without any level (only regional remarks) are returned as a
// *ingest.ParseError wrapping ingest.ErrNoData, which callers count as a
// remark: no data is lost with them.
//
// # Merging and corrections
//
// All parts of one station and observation time become one
// sounding.Sounding. When the same station, part and time is received more
// than once, the report from the bulletin with the latest correction
// indicator wins (no indicator < RRA < RRB < … < AAA < … < CCA < …); among
// equal indicators the last one in the stream wins, so a report received
// both singly and in a collective counts once. Levels are sorted by
// decreasing pressure. Where Parts A and B give the same pressure the
// standard-level values of Part A are kept (Kind stays KindStandard) and
// missing values are filled from Part B; at the surface, the temperature
// and dewpoint of Part B are kept because the significant-level profile is
// built from them. Standard levels below the surface (pressure higher than
// the surface pressure) are extrapolated by the sender and are dropped.
// Heights of significant levels are left NaN: the analysis fills them
// hypsometrically.
//
// # Dates
//
// TEMP carries only the day of month and hour. The year and month come from
// Options.Reference when it is set, else from a YYYY-MM-DD date in the file
// name; when neither is available Next returns one *ingest.ParseError for
// the file (wrapping ErrNoDate) and then io.EOF.
//
// # PILOT heights (assumption)
//
// In PPBB and PPDD groups 9tnu1u2u3 the altitude is (10·tn + ui) units. This package
// takes the unit to be 1000 ft (304.8 m) above mean sea level, as used by
// the North American stations that send PILOT parts instead of 21212. The
// evidence is in the data themselves: at high stations (Salt Lake City
// 1288 m, Grand Junction 1475 m, Boise 874 m in the 2022-07-13 bulletins)
// the first level after the surface is the first multiple of 1000 ft above
// the station elevation, which fits heights above sea level, not above
// ground. The unit is configurable (Options.PilotHeightUnitM) because other
// regions may use 300 m. The surface entry (tn = 0 with u = 0 or "/") is
// skipped: the surface wind is carried by Part A.
package temp
