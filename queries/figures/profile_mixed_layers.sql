-- One sounding's well-mixed layers, lowest first.
--
-- Source: the mixed_layers view. Parameters: $1 station_id, $2 launch_time.
SELECT
    layer_index, base_agl_m, top_agl_m, base_pressure_hpa, top_pressure_hpa,
    theta_k, mixing_ratio_gkg, levels
FROM mixed_layers
WHERE station_id = $1 AND launch_time = $2::TIMESTAMPTZ
ORDER BY layer_index
