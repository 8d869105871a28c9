-- The sounding of a station nearest to a time, within a window.
--
-- Source: the soundings view. Parameters: $1 station_id, $2 the time
-- (TIMESTAMPTZ), $3 the window in seconds.
-- At most one row: the sounding whose launch_time or nominal_time is
-- closest to $2 and no more than $3 s away; ties go to the earlier launch.
SELECT launch_time
FROM soundings
WHERE station_id = $1
    AND least(abs(epoch(launch_time) - epoch($2::TIMESTAMPTZ)),
              abs(epoch(nominal_time) - epoch($2::TIMESTAMPTZ))) <= $3
ORDER BY
    least(abs(epoch(launch_time) - epoch($2::TIMESTAMPTZ)),
          abs(epoch(nominal_time) - epoch($2::TIMESTAMPTZ))),
    launch_time
LIMIT 1
