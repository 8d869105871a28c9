package ingest

import "github.com/sondeclim/sondeclim/sounding"

// Station is what a station list knows about a station, for formats whose
// soundings do not carry it.
type Station struct {
	Name         string
	LatitudeDeg  float64 // degrees north, NaN if unknown
	LongitudeDeg float64 // degrees east, NaN if unknown
	ElevationM   float64 // m above mean sea level, NaN if unknown
}

// Fill sets the name, position and elevation of s that its source did not
// give (empty or NaN) from st.
func (st Station) Fill(s *sounding.Sounding) {
	if s.StationName == "" {
		s.StationName = st.Name
	}
	if s.LatitudeDeg != s.LatitudeDeg { // NaN
		s.LatitudeDeg = st.LatitudeDeg
	}
	if s.LongitudeDeg != s.LongitudeDeg {
		s.LongitudeDeg = st.LongitudeDeg
	}
	if s.ElevationM != s.ElevationM {
		s.ElevationM = st.ElevationM
	}
}

// Where names an input file, or a member of an archive file, in messages:
// "file" or "file!member".
func Where(file, member string) string {
	if member != "" {
		return file + "!" + member
	}
	return file
}
