-- One sounding's mixing height by every method, in the order the
-- mixing_heights table lists the methods.
--
-- Source: the mixing_heights view. Parameters: $1 station_id, $2 launch_time.
SELECT method, height_agl_m, status, note, level_spacing_m, unresolved
FROM mixing_heights
WHERE station_id = $1 AND launch_time = $2::TIMESTAMPTZ
ORDER BY CASE method
    WHEN 'parcel' THEN 1 WHEN 'parcel_virtual' THEN 2 WHEN 'heffter' THEN 3
    WHEN 'bulk_richardson' THEN 4 WHEN 'bulk_richardson_alt' THEN 5 WHEN 'liu_liang' THEN 6
    WHEN 'sbi_top' THEN 7 WHEN 'elevated_inversion_base' THEN 8 ELSE 9 END, method
