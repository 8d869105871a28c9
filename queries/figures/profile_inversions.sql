-- One sounding's inversion layers, lowest first.
--
-- Source: the inversions view. Parameters: $1 station_id, $2 launch_time.
SELECT
    inversion_index, surface_based, base_agl_m, top_agl_m, base_pressure_hpa, top_pressure_hpa,
    depth_m, strength_k, gradient_k_per_km, top_at_ceiling, class
FROM inversions
WHERE station_id = $1 AND launch_time = $2::TIMESTAMPTZ
ORDER BY inversion_index
