-- One sounding's levels in source order.
--
-- Source: the levels view. Parameters: $1 station_id, $2 launch_time.
SELECT
    level_index, level_kind, pressure_hpa, height_m, height_derived, height_agl_m,
    temperature_c, dewpoint_c, theta_k, mixing_ratio_gkg, wind_direction_deg, wind_speed_ms,
    temperature_status, height_status, humidity_status,
    pressure_qc, height_qc, temperature_qc, humidity_qc, wind_qc
FROM levels
WHERE station_id = $1 AND launch_time = $2::TIMESTAMPTZ
ORDER BY level_index
