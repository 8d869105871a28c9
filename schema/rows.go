package schema

import "time"

// Row structs define the store's tables. Each exported field becomes one
// Parquet column named by its `col` tag and documented by its `doc` tag
// (units first, then meaning). Conventions the writer applies:
//
//   - float64 NaN is written as null;
//   - a pointer field (*int32, *bool, *string) is null when nil;
//   - time.Time is a UTC timestamp with microsecond precision;
//   - string, bool, int32, int64 and float64 are written as they are;
//   - a string field tagged `values:"NAME"` takes its allowed values from
//     the Go type or registry that defines them (vocab.go): a closed set
//     (level kinds, value statuses, QC flags) is written as a dictionary
//     column, and "{values}" in its doc tag is replaced by the list.
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

	SoundingHash     string `col:"sounding_hash" doc:"16 hex digits identifying the observed content of the sounding (not its source position); equal hashes mean identical observations"`
	DuplicatesMerged int32  `col:"duplicates_merged" doc:"count; other copies of the same station and launch time that were read and dropped in favour of this one"`
	DuplicateChoice  string `col:"duplicate_choice" doc:"rule that chose this copy among duplicates (more_levels_below_500hpa, more_levels, later_source); empty when there was no duplicate"`

	SourceFile     string `col:"source_file" doc:"input file the sounding was read from"`
	SourceMember   string `col:"source_member" doc:"member inside a zip archive, empty otherwise"`
	SourceLine     int64  `col:"source_line" doc:"1-based line of the sounding's header in the source"`
	SourceFormat   string `col:"source_format" doc:"reader that decoded the sounding"`
	DeclaredLevels int32  `col:"declared_levels" doc:"count; levels the source header states (-1 when the format has no count)"`
	LevelCount     int32  `col:"level_count" doc:"count; levels read"`

	SurfacePressureHPa  float64 `col:"surface_pressure_hpa" doc:"hPa; pressure at the ground: the surface level's own, or derived hypsometrically from the station elevation and the lowest level (surface_pressure_derived)"`
	SurfaceDerived      bool    `col:"surface_pressure_derived" doc:"true when the surface line carries no pressure and surface_pressure_hpa was derived hypsometrically"`
	LowestLevelAGLM     float64 `col:"lowest_level_agl_m" doc:"m above ground of the level the analysed profile starts at: 0 at the surface line, more when the surface line has no pressure or temperature"`
	SurfaceTemperatureC float64 `col:"surface_temperature_c" doc:"degC; temperature at the lowest level of the analysed profile (lowest_level_agl_m)"`
	SurfaceDewpointC    float64 `col:"surface_dewpoint_c" doc:"degC; dewpoint at the lowest level of the analysed profile"`
	SurfaceThetaK       float64 `col:"surface_theta_k" doc:"K; potential temperature at the lowest level of the analysed profile"`
	SurfaceWindSpeedMS  float64 `col:"surface_wind_speed_ms" doc:"m/s; wind speed at the surface level"`

	QCStatus       string `col:"qc_status" doc:"quality-control status: ok, suspect, insufficient:<reason> or rejected:<reason> (see qc_findings)"`
	QCBad          int32  `col:"qc_findings_bad" doc:"count; findings of severity bad (those values are not used)"`
	QCSuspect      int32  `col:"qc_findings_suspect" doc:"count; findings of severity suspect (not used unless ingested with --use-suspect)"`
	QCCorrected    int32  `col:"qc_findings_corrected" doc:"count; values corrected by quality control (used with their corrected value)"`
	AnalysisStatus string `col:"analysis_status" values:"analysis_status" doc:"{values}: ok when analysed, else the reason it could not be; or qc_ followed by qc_status when quality control excluded the sounding; soundings not ok count as attempted but not valid"`
	ConstantSet    string `col:"constant_set" doc:"name of the thermodynamic constant set used for derived values"`

	SunElevationDeg float64 `col:"sun_elevation_deg" doc:"degrees; geometric solar elevation at launch (Astronomical Almanac low-precision formulas)"`
	LocalSolarTimeH float64 `col:"local_solar_time_h" doc:"h, 0-24; local apparent solar time at launch"`
	SunClass        string  `col:"sun_class" values:"sun_class" doc:"sun at launch: {values}; by default day above 10 deg, low_sun 0 to 10 deg, civil_twilight 0 to -6 deg, night below -6 deg, unknown without a position"`

	SBIPresent       *bool   `col:"sbi_present" doc:"true when a surface-based temperature inversion is present; null when not analysable"`
	SBITopAGLM       float64 `col:"sbi_top_agl_m" doc:"m above ground; top of the surface-based inversion"`
	SBITopPressHPa   float64 `col:"sbi_top_pressure_hpa" doc:"hPa; pressure at the top of the surface-based inversion"`
	SBIStrengthK     float64 `col:"sbi_strength_k" doc:"K; temperature at the inversion top minus temperature at its base"`
	SBIGradient      float64 `col:"sbi_gradient_k_per_km" doc:"K/km; mean temperature gradient through the surface-based inversion"`
	SBIClass         string  `col:"sbi_class" values:"inversion_class" doc:"class of the surface-based inversion: {values} (documented rules, analyze.InversionClassConfig; a surface-based inversion is radiation or unclassified)"`
	InversionCount   int32   `col:"inversion_count" doc:"count; inversion layers below the search ceiling (see the inversions table)"`
	EIBaseAGLM       float64 `col:"ei_base_agl_m" doc:"m above ground; base of the lowest elevated inversion"`
	EITopAGLM        float64 `col:"ei_top_agl_m" doc:"m above ground; top of the lowest elevated inversion"`
	EIStrengthK      float64 `col:"ei_strength_k" doc:"K; temperature rise through the lowest elevated inversion"`
	EIClass          string  `col:"ei_class" values:"inversion_class" doc:"class of the lowest elevated inversion: {values} (an elevated inversion is never radiation)"`
	MixedBaseAGLM    float64 `col:"mixed_layer_base_agl_m" doc:"m above ground; bottom of the lowest well-mixed layer (the surface, or the top of the surface-based inversion)"`
	MixedTopAGLM     float64 `col:"mixed_layer_top_agl_m" doc:"m above ground; top of the lowest well-mixed layer"`
	MixedThetaK      float64 `col:"mixed_layer_theta_k" doc:"K; pressure-weighted (mass-weighted) mean potential temperature of the mixed layer"`
	MixedMixingRatio float64 `col:"mixed_layer_mixing_ratio_gkg" doc:"g/kg; pressure-weighted (mass-weighted) mean water-vapour mixing ratio of the mixed layer"`
	MixedLevels      int32   `col:"mixed_layer_levels" doc:"count; sounding levels inside the mixed layer (0 when none was found)"`
	ParcelMHM        float64 `col:"mixing_height_parcel_m" doc:"m above ground; mixing height by the parcel method from the sounding's own surface temperature (0 when status is surface, null when undefined)"`
	ParcelMHStatus   string  `col:"mixing_height_parcel_status" values:"mixing_height_status" doc:"{values}: surface when the parcel is stable from the ground up, undefined when there is no crossing below the ceiling or the sounding is not analysable"`
	ConsensusMHM     float64 `col:"mixing_height_consensus_m" doc:"m above ground; median of the methods that fit the sounding's bl_regime and whose status is ok (see the mixing_heights table for each method)"`
	ConsensusStatus  string  `col:"mixing_height_consensus_status" values:"mixing_height_status" doc:"{values}"`
	ConsensusSpreadM float64 `col:"mixing_height_spread_m" doc:"m; highest minus lowest of the consensus methods (those fitting bl_regime) whose status is ok"`
	ConsensusMethods int32   `col:"mixing_height_methods_ok" doc:"count; methods in the consensus (those fitting bl_regime) whose status is ok"`
	Unresolved       bool    `col:"mixing_height_unresolved" doc:"true when the sounding's level spacing around the consensus height is too coarse to resolve it"`
	LiuLiangRegime   string  `col:"liu_liang_regime" values:"liu_liang_regime" doc:"boundary-layer regime by Liu and Liang (2010): {values}"`
	BLRegime         string  `col:"bl_regime" values:"bl_regime" doc:"boundary-layer regime that chooses the consensus methods, {values}: stable with a surface-based inversion or Liu-Liang SBL, else convective with the sun above the horizon, neutral with it below; empty when unknown (no position and no Liu-Liang regime)"`
	ResidualTopAGLM  float64 `col:"residual_layer_top_agl_m" doc:"m above ground; top of the residual layer (the previous day's mixed layer left aloft) in the stable and neutral regimes: base of the lowest elevated inversion above the night's mixing height, else the Heffter height above it; not a mixing height; null by day or when none is found"`
	TransportWindMS  float64 `col:"transport_wind_ms" doc:"m/s; mean wind from the ground to the mixing height used for ventilation"`
	TransportWindDef string  `col:"transport_wind_method" values:"transport_wind" doc:"averaging used for transport_wind_ms: {values}"`
	VentilationM2S   float64 `col:"ventilation_index_m2s" doc:"m2/s; mixing height times transport wind"`
	VentilationKtFt  float64 `col:"ventilation_index_ktft" doc:"kt*ft; ventilation index in knot-feet (1 m2/s = 6.37744 kt*ft)"`
	VentilationCat   string  `col:"ventilation_category" doc:"category of ventilation_index_m2s in the table named by ventilation_table"`
	VentilationTable string  `col:"ventilation_table" doc:"name of the category table used"`
	VentilationMH    string  `col:"ventilation_height_method" doc:"mixing-height method whose height feeds the ventilation index"`

	HeatDeficitMJ   float64 `col:"heat_deficit_mj_m2" doc:"MJ/m2; heat deficit from the surface to the reference height h, cp * integral of rho (theta(h) - theta) dz: the heat needed to mix the layer out to theta(h) (negative when the layer is superadiabatic)"`
	HeatDeficitRef  string  `col:"heat_deficit_reference" doc:"reference height of heat_deficit_mj_m2: agl_<m>m (above ground), msl_<m>m (above sea level) or p_<hPa>hpa (pressure level)"`
	HeatDeficitTopM float64 `col:"heat_deficit_top_agl_m" doc:"m above ground; the reference height placed on this sounding"`
	StableFraction  float64 `col:"stable_layer_fraction" doc:"0-1; fraction of the lowest layer (default 1.5 km above ground) whose lapse rate is at most 2.5 K/km (Wolyn and McKee 1989)"`
	DeepStable      *bool   `col:"deep_stable_layer" doc:"true when stable_layer_fraction is at least 0.65 (a deep stable layer, Wolyn and McKee 1989); null when not computable"`
}

// DescentRow is one row of the `descents` table: the profile a radiosonde
// measured while falling after its balloon burst (BUFR 3 09 056). It has
// its ascent's station and launch time, so it is kept beside the ascents
// rather than among them; its levels are in `descent_levels` (the levels
// table's columns) and its quality-control findings in
// `descent_qc_findings`. Boundary-layer diagnostics are not derived: the
// descent ends far from the station, hours after the launch, falling at
// several metres per second, so its lowest kilometres describe neither
// the launch site nor the launch time.
type DescentRow struct {
	StationID    string    `col:"station_id" doc:"station identifier of the launch site"`
	LaunchTime   time.Time `col:"launch_time" doc:"UTC; launch time of the flight, the same as its ascent's (join soundings on station_id and launch_time)"`
	Year         int32     `col:"year" doc:"calendar year of the flight's nominal time"`
	StartLatDeg  float64   `col:"start_latitude_deg" doc:"degrees north; where the descent began (coordinate significance 2, start of observation, in 3 09 056)"`
	StartLonDeg  float64   `col:"start_longitude_deg" doc:"degrees east; where the descent began"`
	SoundingHash string    `col:"sounding_hash" doc:"16 hex digits identifying the observed content of the descent (not its source position)"`
	Duplicates   int32     `col:"duplicates_merged" doc:"count; other copies of the same descent that were read and dropped in favour of this one"`
	SourceFile   string    `col:"source_file" doc:"input file the descent was read from"`
	SourceMember string    `col:"source_member" doc:"member inside a zip archive, empty otherwise"`
	SourceFormat string    `col:"source_format" doc:"reader that decoded the descent"`
	LevelCount   int32     `col:"level_count" doc:"count; levels read"`
	QCStatus     string    `col:"qc_status" doc:"quality-control status as for soundings (a descent has no surface level, which the checks note as suspect)"`
	QCBad        int32     `col:"qc_findings_bad" doc:"count; findings of severity bad"`
	QCSuspect    int32     `col:"qc_findings_suspect" doc:"count; findings of severity suspect"`
	QCCorrected  int32     `col:"qc_findings_corrected" doc:"count; values corrected by quality control"`
	ConstantSet  string    `col:"constant_set" doc:"name of the thermodynamic constant set used for derived values"`
}

// InversionRow is one row of the `inversions` table: one inversion layer of
// one sounding, lowest first.
type InversionRow struct {
	StationID      string    `col:"station_id" doc:"station identifier"`
	LaunchTime     time.Time `col:"launch_time" doc:"UTC; launch time of the sounding"`
	Year           int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Index          int32     `col:"inversion_index" doc:"0-based position, lowest first"`
	SurfaceBased   bool      `col:"surface_based" doc:"true when the base is the surface level"`
	BaseAGLM       float64   `col:"base_agl_m" doc:"m above ground"`
	TopAGLM        float64   `col:"top_agl_m" doc:"m above ground"`
	BasePressHPa   float64   `col:"base_pressure_hpa" doc:"hPa"`
	TopPressHPa    float64   `col:"top_pressure_hpa" doc:"hPa"`
	DepthM         float64   `col:"depth_m" doc:"m; top minus base"`
	StrengthK      float64   `col:"strength_k" doc:"K; temperature at the top minus temperature at the base"`
	GradientKPerKm float64   `col:"gradient_k_per_km" doc:"K/km; strength over depth"`
	ThetaDeltaK    float64   `col:"theta_change_k" doc:"K; potential temperature at the top minus at the base"`
	DPDDeltaK      float64   `col:"dewpoint_depression_change_k" doc:"K; dewpoint depression at the top minus at the base (positive: drier upward)"`
	RHDeltaPct     float64   `col:"relative_humidity_change_pct" doc:"% points; relative humidity at the top minus at the base"`
	WDeltaGKg      float64   `col:"mixing_ratio_change_gkg" doc:"g/kg; mixing ratio at the top minus at the base"`
	TurningDeg     float64   `col:"wind_turning_deg" doc:"degrees; change of wind direction from base to top, veering (clockwise) positive"`
	Levels         int32     `col:"levels" doc:"count; sounding levels from base to top inclusive"`
	TopAtCeiling   bool      `col:"top_at_ceiling" doc:"true when the top is the highest level searched, so the layer may continue above"`
	Class          string    `col:"class" values:"inversion_class" doc:"{values} (documented rules, analyze.InversionClassConfig)"`
}

// MixedLayerRow is one row of the `mixed_layers` table: one well-mixed layer
// of one sounding, lowest first.
type MixedLayerRow struct {
	StationID   string    `col:"station_id" doc:"station identifier"`
	LaunchTime  time.Time `col:"launch_time" doc:"UTC; launch time of the sounding"`
	Year        int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Index       int32     `col:"layer_index" doc:"0-based position, lowest first"`
	BaseAGLM    float64   `col:"base_agl_m" doc:"m above ground"`
	TopAGLM     float64   `col:"top_agl_m" doc:"m above ground"`
	BasePress   float64   `col:"base_pressure_hpa" doc:"hPa"`
	TopPress    float64   `col:"top_pressure_hpa" doc:"hPa"`
	ThetaK      float64   `col:"theta_k" doc:"K; pressure-weighted (mass-weighted) mean potential temperature"`
	MixingRatio float64   `col:"mixing_ratio_gkg" doc:"g/kg; pressure-weighted (mass-weighted) mean mixing ratio"`
	ThetaRange  float64   `col:"theta_range_k" doc:"K; highest minus lowest potential temperature in the layer"`
	ThetaVRange float64   `col:"theta_v_range_k" doc:"K; highest minus lowest virtual potential temperature in the layer"`
	WRange      float64   `col:"mixing_ratio_range_gkg" doc:"g/kg; highest minus lowest mixing ratio in the layer"`
	Levels      int32     `col:"levels" doc:"count; sounding levels in the layer"`
	SuperadTop  float64   `col:"superadiabatic_top_agl_m" doc:"m above ground; top of a near-surface superadiabatic layer allowed at the bottom of the layer (null when none)"`
}

// MixingHeightRow is one row of the `mixing_heights` table: one method's
// mixing height for one sounding. Every sounding has one row per method,
// whatever the status, so failures are counted, not hidden.
type MixingHeightRow struct {
	StationID     string    `col:"station_id" doc:"station identifier"`
	LaunchTime    time.Time `col:"launch_time" doc:"UTC; launch time of the sounding"`
	Year          int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Method        string    `col:"method" values:"mixing_height_method" doc:"{values}"`
	HeightAGLM    float64   `col:"height_agl_m" doc:"m above ground; 0 for status surface, null for undefined"`
	Status        string    `col:"status" values:"mixing_height_status" doc:"{values}"`
	Note          string    `col:"note" doc:"short reason for undefined results or detail of an ok one"`
	LevelSpacingM float64   `col:"level_spacing_m" doc:"m; spacing of the sounding's levels around the height"`
	Unresolved    bool      `col:"unresolved" doc:"true when the level spacing is too coarse to resolve the height"`
}

// AfternoonRow is one row of the `afternoon_mixing` table: the afternoon
// mixing height of one local day by the Holzworth construction (the
// morning sounding's profile and the day's maximum temperature). The row
// of a local day is stored in the partition of its morning sounding's UTC
// year, also where the day straddles the UTC new year (engine/context.go).
type AfternoonRow struct {
	StationID     string    `col:"station_id" doc:"station identifier"`
	Year          int32     `col:"year" doc:"calendar year of the morning sounding's nominal time"`
	LocalDate     time.Time `col:"local_date" doc:"local solar date (midnight UTC of that date)"`
	MorningLaunch time.Time `col:"morning_launch_time" doc:"UTC; launch time of the morning sounding"`
	TmaxC         float64   `col:"tmax_c" doc:"degC; maximum surface temperature of the day"`
	TmaxSource    string    `col:"tmax_source" values:"tmax_source" doc:"{values}: daily_maxima from the user's file; later_sounding is not a maximum but the surface temperature of the same local day's later sounding (12-20 h local mean solar time; US 00 UTC launches are near or after sunset), which biases the height low, most in winter"`
	HeightAGLM    float64   `col:"height_agl_m" doc:"m above ground; afternoon mixing height"`
	Status        string    `col:"status" values:"mixing_height_status" doc:"{values}"`
	Note          string    `col:"note" doc:"reason when undefined"`
}

// LevelRow is one row of the `levels` table: one level of one sounding with
// its observed and derived values.
type LevelRow struct {
	StationID  string    `col:"station_id" doc:"station identifier"`
	LaunchTime time.Time `col:"launch_time" doc:"UTC; launch time of the sounding this level belongs to"`
	Year       int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Index      int32     `col:"level_index" doc:"0-based position of the level in the source order"`
	Kind       string    `col:"level_kind" values:"level_kind" doc:"{values}"`
	SourceLine int64     `col:"source_line" doc:"1-based line of the level in the source file (0 if not line-oriented)"`

	ElapsedS       float64 `col:"elapsed_s" doc:"s since release"`
	LatDispDeg     float64 `col:"latitude_displacement_deg" doc:"degrees north of the sounding's latitude_deg (the launch site): where the balloon was at this level; null when the source gives no per-level position (BUFR 3 09 052, 3 09 056 and 3 09 057 give it, at 0.00001 deg; netCDF flights from their per-record latitude)"`
	LonDispDeg     float64 `col:"longitude_displacement_deg" doc:"degrees east of the sounding's longitude_deg (the launch site): where the balloon was at this level; null when the source gives no per-level position (as latitude_displacement_deg)"`
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

	TemperatureStatus string `col:"temperature_status" values:"value_status" doc:"{values}"`
	HeightStatus      string `col:"height_status" values:"value_status" doc:"{values}"`
	HumidityStatus    string `col:"humidity_status" values:"value_status" doc:"status of the dewpoint depression: {values}"`

	PressureQC    string `col:"pressure_qc" values:"qc_flag" doc:"quality-control flag of the pressure: {values}"`
	HeightQC      string `col:"height_qc" values:"qc_flag" doc:"quality-control flag of the height"`
	TemperatureQC string `col:"temperature_qc" values:"qc_flag" doc:"quality-control flag of the temperature (derived values use the corrected value when corrected)"`
	HumidityQC    string `col:"humidity_qc" values:"qc_flag" doc:"quality-control flag of the humidity (dewpoint depression)"`
	WindQC        string `col:"wind_qc" values:"qc_flag" doc:"quality-control flag of the wind speed"`
}

// QCFindingRow is one row of the `qc_findings` table: one finding of the
// quality control of one sounding (package qc), about one value, one level
// or the whole sounding. Soundings without findings have no rows; their
// status is in the soundings table.
type QCFindingRow struct {
	StationID   string    `col:"station_id" doc:"station identifier"`
	LaunchTime  time.Time `col:"launch_time" doc:"UTC; launch time of the sounding the finding belongs to (joins soundings on station_id, launch_time)"`
	Year        int32     `col:"year" doc:"calendar year of the sounding's nominal time"`
	Index       int32     `col:"level_index" doc:"0-based position of the level in the source order (as in levels.level_index); -1 for a finding about the whole sounding"`
	PressureHPa float64   `col:"pressure_hpa" doc:"hPa; pressure of the level as reported, null for wind-only levels and whole-sounding findings"`
	Variable    string    `col:"variable" values:"qc_variable" doc:"variable the finding is about: {values}; level for the whole level, sounding for the whole sounding"`
	Check       string    `col:"qc_check" values:"qc_check" doc:"check that produced the finding: {values}"`
	Severity    string    `col:"severity" values:"qc_severity" doc:"{values} (bad values are never used; suspect ones only on request; corrected ones are used with corrected_value)"`
	Value       float64   `col:"value" doc:"the value as observed, in the display unit of its variable: hPa, gpm, degC, %, K (dewpoint depression), degrees, m/s or s; null when none"`
	Corrected   float64   `col:"corrected_value" doc:"the corrected value in the same unit as value, for severity corrected; null otherwise"`
	Message     string    `col:"message" doc:"what was wrong, for people, with the numbers the check used"`
}
