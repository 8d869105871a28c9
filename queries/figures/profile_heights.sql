-- One sounding's mixing height by every method, in the order the
-- mixing_heights table lists the methods.
--
-- Source: the mixing_heights view; method_rank is the registry's order
-- (queries/macros.go). Parameters: $1 station_id, $2 launch_time.
SELECT method, height_agl_m, status, note, level_spacing_m, unresolved
FROM mixing_heights
WHERE station_id = $1 AND launch_time = $2::TIMESTAMPTZ
ORDER BY method_rank(method), method
