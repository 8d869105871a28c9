-- Stations of the report with their position and period of record.
--
-- Source: the soundings view. Parameters: $1 station_id, or '' for all.
-- One row per station_id, sorted by station_id:
--   station_name    the longest name given for the station ('' when none)
--   latitude_deg    degrees north, longitude_deg degrees east, elevation_m
--                   m above mean sea level: those of the latest sounding
--                   that gives them (a station that moved keeps its last
--                   position; n_positions says whether it moved)
--   n_positions     distinct (latitude, longitude, elevation) triples, to
--                   0.01 degree and 1 m
--   first_time      earliest nominal_time (UTC), last_time latest
--   n_soundings     soundings in the store (every row)
--   n_valid         soundings analysed (analysed(analysis_status))
SELECT
    station_id,
    coalesce(arg_max(station_name, length(station_name)), '') AS station_name,
    arg_max(latitude_deg, nominal_time) FILTER (WHERE NOT isnan(latitude_deg)) AS latitude_deg,
    arg_max(longitude_deg, nominal_time) FILTER (WHERE NOT isnan(longitude_deg)) AS longitude_deg,
    arg_max(elevation_m, nominal_time) FILTER (WHERE NOT isnan(elevation_m)) AS elevation_m,
    count(DISTINCT (round(latitude_deg, 2), round(longitude_deg, 2), round(elevation_m))) AS n_positions,
    min(nominal_time) AS first_time,
    max(nominal_time) AS last_time,
    count(*) AS n_soundings,
    count(*) FILTER (WHERE analysed(analysis_status)) AS n_valid
FROM soundings
WHERE $1 = '' OR station_id = $1
GROUP BY station_id
ORDER BY station_id
