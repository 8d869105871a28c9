// Package bufr decodes WMO FM 94 BUFR messages (WMO-No. 306, Manual on
// Codes, Vol. I.2; format name "bufr") and maps radiosonde reports to
// canonical soundings. It is driven by the WMO's own Table B and Table D,
// embedded in the binary (tables/, version in tables/VERSION, MIT licence
// in tables/LICENSE.md; DEVELOPERS.md says how to update them).
//
// # Messages
//
// Scanner finds messages in a byte stream: messages one after another,
// messages inside GTS bulletins (SOH, sequence number, abbreviated
// heading, message, ETX), and anything else between one message's "7777"
// and the next "BUFR". Editions 2, 3 and 4 are read (Section 0 to
// Section 5, the optional Section 2 skipped); editions 0 and 1, which
// carry no total length, are reported and skipped.
//
// # Decoding
//
// Message.Decode expands Section 3's descriptors and reads Section 4:
//
//   - Table B elements, Table D sequences, fixed replication and delayed
//     replication (0 31 000, 0 31 001, 0 31 002), delayed repetition
//     (0 31 011, 0 31 012: the group's data are present once);
//   - several subsets, uncompressed and compressed (Regulation 94.6.3:
//     R0, 6-bit NBINC, increments; all-ones increments are missing;
//     characters with NBINC in octets);
//   - operators 2 01 (data width), 2 02 (scale), 2 03 (new reference
//     values), 2 04 (associated fields, nested, with 0 31 021; class 31
//     elements carry none), 2 05 (character data), 2 06 (a local element
//     of the given width: decoded when Table B knows it, else read past),
//     2 07 (increased scale, reference and width), 2 08 (character
//     width), 2 21 (data not present);
//   - the quality-information and statistics operators 2 22, 2 23, 2 24,
//     2 25, 2 32 with data-present bitmaps (0 31 031), 2 35 (cancel
//     back references), 2 36 (define a bitmap for reuse) and 2 37 (reuse,
//     cancel). The bitmap refers to the data elements before the first
//     such operator; each 2 2x 255 yields the value it stands for
//     (MarkStatistic) with the Table B width, scale and reference of the
//     element it points at (2 25: one bit wider, reference −2^width).
//
// Not decoded: local Table B and D entries (a message that uses a local
// descriptor without 2 06 is rejected, naming the descriptor), operators
// 2 41–2 43 (events, conditioning events, categorical forecasts) and any
// other Table C entry not listed, edition 0/1 messages. The 2 01/2 02/2 07
// changes in force when a bitmap's element was read are not applied to the
// values its 2 2x 255 markers stand for.
//
// A message that cannot be decoded (unknown descriptor, truncated data, a
// bitmap that refers back over more elements than there are, an
// expansion beyond the limits on nesting and values) is rejected with the
// reason; Reader reports it as *ingest.ParseError at the message's byte
// offset and carries on with the next message.
//
// # Soundings
//
// Reader turns every subset into one sounding (the radiosonde sequences
// 3 09 052 TEMP, 3 09 057 high resolution, the older 3 09 007 with its
// quality information, the descent 3 09 056, and other layouts with the
// same elements). A message with 3 09 056 gives descents
// (sounding.Sounding.Descent): same station and launch time as the
// flight's ascent, levels stored lowest first (the message lists them
// from the burst down; the reader reverses them when the first pressure
// is lower than the last), position where the descent began (its
// 3 01 021 after coordinate significance 2, "start of observation"). The
// mapping:
//
//   - StationID: WMO block and station number (0 01 001, 0 01 002) as
//     five digits, else the ship or mobile station's call sign (0 01 011).
//   - Position: the first latitude and longitude outside any replication
//     (0 05 001/0 05 002, 0 06 001/0 06 002); ElevationM: height of the
//     station ground (0 07 030), else of the station (0 07 001).
//   - LaunchTime: the date and time (0 04 001–0 04 006, to the second)
//     that follows time significance 18 "launch time" (0 08 021), with
//     LaunchTimeReported; NominalTime is then the launch time rounded to
//     the hour, NominalHourInferred. Without a launch time (3 09 007) the
//     report's date and hour are the nominal time and the launch time;
//     without either, Section 1's typical time.
//   - Levels: each iteration of an outermost replication that holds a
//     pressure (0 07 004) or height (0 10 009, 0 07 009, or geopotential
//     0 10 003 ÷ 9.80665 m s⁻²) becomes a level, in message order:
//     temperature 0 12 101/0 12 001, dewpoint 0 12 103/0 12 003 (its
//     depression derived), wind direction and speed 0 11 001/0 11 002,
//     time since launch 0 04 086 (ElapsedS), latitude and longitude
//     displacement from the launch site 0 05 015/0 06 015
//     (LatDisplacementDeg, LonDisplacementDeg; 3 09 052, 3 09 056 and
//     3 09 057 carry them, at 0.00001°). Wind-shear iterations
//     (0 11 061/0 11 062, 3 03 051) are not levels.
//   - Kind from 0 08 042 (or 0 08 001): bit 1 surface, bit 2 standard
//     level, otherwise significant (temperature, humidity or wind); bit 3
//     sets Tropopause. A level without pressure is wind-only. Standard
//     levels with a pressure higher than the surface level's lie below the
//     ground (the sender extrapolated them) and are dropped, as the TEMP
//     reader does.
//   - Missing values stay NaN with status Missing. Quality information
//     (percent confidence) and substituted values after 2 22–2 37 are
//     decoded but not mapped.
//
// A subset without a station identifier, without any time or without a
// level is rejected with a *ingest.ParseError at the message's offset.
package bufr
