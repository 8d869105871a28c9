-- One sounding's identity, surface values and diagnostics.
--
-- Source: the soundings view. Parameters: $1 station_id, $2 launch_time.
-- Columns are those of the soundings table that the single-sounding
-- report prints; see `sondeclim schema` for their units.
SELECT
    station_id, station_name, launch_time, nominal_time, nominal_hour,
    latitude_deg, longitude_deg, elevation_m,
    source_file, source_line, source_format, level_count,
    qc_status, analysis_status, sun_class, sun_elevation_deg, liu_liang_regime, bl_regime,
    surface_pressure_hpa, surface_pressure_derived, lowest_level_agl_m,
    surface_temperature_c, surface_dewpoint_c, surface_theta_k, residual_layer_top_agl_m,
    mixing_height_consensus_m, mixing_height_consensus_status, mixing_height_spread_m,
    mixing_height_methods_ok, mixing_height_unresolved,
    transport_wind_ms, transport_wind_method, ventilation_index_m2s, ventilation_index_ktft,
    ventilation_category, ventilation_table, ventilation_height_method
FROM soundings
WHERE station_id = $1 AND launch_time = $2::TIMESTAMPTZ
