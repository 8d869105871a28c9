package schema

import "time"

// Row structs define the store's tables. Each exported field becomes one
// Parquet column named by its `col` tag and documented by its `doc` tag
// (units first, then meaning). Conventions the writer applies:
//
//   - float64 NaN is written as null;
//   - a pointer field (*int32, *bool, *string) is null when nil;
//   - time.Time is a UTC timestamp with microsecond precision;
//   - string, bool, int32, int64 and float64 are written as they are.
//
// Display units (hPa, °C, g/kg) are used in the tables because the tables are
// the pipeline's output edge; the column name always carries the unit.

// SoundingRow is one row of the `soundings` table: one radiosonde ascent with
// its identity, source, surface values and boundary-layer diagnostics.
type SoundingRow struct {
	StationID    string    `col:"station_id" doc:"station identifier as given by the source"`
	StationName  string    `col:"station_name" doc:"station name from the station list, empty when none was given"`
	LaunchTime   time.Time `col:"launch_time" doc:"UTC; release time when the source gives one, else the nominal time"`
	LaunchKnown  bool      `col:"launch_time_reported" doc:"true when launch_time is the reported release time"`
	NominalTime  time.Time `col:"nominal_time" doc:"UTC; synoptic observation time (date and nominal hour)"`
	NominalHour  int32     `col:"nominal_hour" doc:"h UTC, 0-23; nominal hour of the observation"`
	HourInferred bool      `col:"nominal_hour_inferred" doc:"true when the source's nominal hour was missing (hour 99) and was inferred from the release time"`
	Year         int32     `col:"year" doc:"calendar year of nominal_time"`
	Month        int32     `col:"month" doc:"calendar month of nominal_time, 1-12"`
	Season       string    `col:"season" doc:"meteorological season of nominal_time: DJF, MAM, JJA or SON (December counts with the following year's DJF in season_year)"`
	SeasonYear   int32     `col:"season_year" doc:"year the season belongs to; December is counted with the following year"`
	LatitudeDeg  float64   `col:"latitude_deg" doc:"degrees north"`
	LongitudeDeg float64   `col:"longitude_deg" doc:"degrees east"`
	ElevationM   float64   `col:"elevation_m" doc:"m above mean sea level; station (surface) elevation"`

	SourceFile     string `col:"source_file" doc:"input file the sounding was read from"`
	SourceMember   string `col:"source_member" doc:"member inside a zip archive, empty otherwise"`
	SourceLine     int64  `col:"source_line" doc:"1-based line of the sounding's header in the source"`
	SourceFormat   string `col:"source_format" doc:"reader that decoded the sounding"`
	DeclaredLevels int32  `col:"declared_levels" doc:"count; levels the source header states (-1 when the format has no count)"`
	LevelCount     int32  `col:"level_count" doc:"count; levels read"`

	SurfacePressureHPa  float64 `col:"surface_pressure_hpa" doc:"hPa; pressure of the lowest level with a pressure"`
	SurfaceTemperatureC float64 `col:"surface_temperature_c" doc:"degC; temperature at the surface level"`
	SurfaceDewpointC    float64 `col:"surface_dewpoint_c" doc:"degC; dewpoint at the surface level"`
	SurfaceThetaK       float64 `col:"surface_theta_k" doc:"K; potential temperature at the surface level"`
	SurfaceWindSpeedMS  float64 `col:"surface_wind_speed_ms" doc:"m/s; wind speed at the surface level"`

	AnalysisStatus string `col:"analysis_status" doc:"ok, or the reason the sounding could not be analysed (e.g. insufficient_levels); such soundings count as attempted but not valid"`
	ConstantSet    string `col:"constant_set" doc:"name of the thermodynamic constant set used for derived values"`

	SBIPresent       *bool   `col:"sbi_present" doc:"true when a surface-based temperature inversion is present; null when not analysable"`
	SBITopAGLM       float64 `col:"sbi_top_agl_m" doc:"m above ground; top of the surface-based inversion"`
	SBITopPressHPa   float64 `col:"sbi_top_pressure_hpa" doc:"hPa; pressure at the top of the surface-based inversion"`
	SBIStrengthK     float64 `col:"sbi_strength_k" doc:"K; temperature at the inversion top minus temperature at its base"`
	MixedBaseAGLM    float64 `col:"mixed_layer_base_agl_m" doc:"m above ground; bottom of the lowest well-mixed layer (the surface, or the top of the surface-based inversion)"`
	MixedTopAGLM     float64 `col:"mixed_layer_top_agl_m" doc:"m above ground; top of the lowest well-mixed layer"`
	MixedThetaK      float64 `col:"mixed_layer_theta_k" doc:"K; pressure-weighted (mass-weighted) mean potential temperature of the mixed layer"`
	MixedMixingRatio float64 `col:"mixed_layer_mixing_ratio_gkg" doc:"g/kg; pressure-weighted (mass-weighted) mean water-vapour mixing ratio of the mixed layer"`
	MixedLevels      int32   `col:"mixed_layer_levels" doc:"count; sounding levels inside the mixed layer (0 when none was found)"`
	ParcelMHM        float64 `col:"mixing_height_parcel_m" doc:"m above ground; mixing height by the parcel method from the sounding's own surface temperature (0 when status is surface, null when undefined)"`
	ParcelMHStatus   string  `col:"mixing_height_parcel_status" doc:"ok, surface (parcel stable from the ground up) or undefined (no crossing below the ceiling, or not analysable)"`
}

// LevelRow is one row of the `levels` table: one level of one sounding with
// its observed and derived values.
type LevelRow struct {
	StationID  string    `col:"station_id" doc:"station identifier"`
	LaunchTime time.Time `col:"launch_time" doc:"UTC; launch time of the sounding this level belongs to"`
	Year       int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Index      int32     `col:"level_index" doc:"0-based position of the level in the source order"`
	Kind       string    `col:"level_kind" doc:"surface, standard, significant or wind_only"`
	SourceLine int64     `col:"source_line" doc:"1-based line of the level in the source file (0 if not line-oriented)"`

	ElapsedS       float64 `col:"elapsed_s" doc:"s since release"`
	PressureHPa    float64 `col:"pressure_hpa" doc:"hPa"`
	HeightM        float64 `col:"height_m" doc:"gpm above mean sea level; reported, or filled hypsometrically (see height_derived)"`
	HeightDerived  bool    `col:"height_derived" doc:"true when height_m was filled by hypsometric integration"`
	HeightAGLM     float64 `col:"height_agl_m" doc:"gpm above the surface level"`
	TemperatureC   float64 `col:"temperature_c" doc:"degC"`
	DewpointC      float64 `col:"dewpoint_c" doc:"degC; given, or temperature minus dewpoint depression"`
	RelHumidityPct float64 `col:"relative_humidity_pct" doc:"%, with respect to water, as reported"`
	WindDirDeg     float64 `col:"wind_direction_deg" doc:"degrees true, direction the wind blows from"`
	WindSpeedMS    float64 `col:"wind_speed_ms" doc:"m/s"`
	ThetaK         float64 `col:"theta_k" doc:"K; potential temperature, T (1000 hPa / p)^kappa"`
	MixingRatioGKg float64 `col:"mixing_ratio_gkg" doc:"g/kg; water-vapour mixing ratio from dewpoint and pressure"`

	TemperatureStatus string `col:"temperature_status" doc:"reported, missing, removed_upstream or derived"`
	HeightStatus      string `col:"height_status" doc:"reported, missing, removed_upstream or derived"`
	HumidityStatus    string `col:"humidity_status" doc:"status of the dewpoint depression (reported, missing, removed_upstream or derived)"`
}
