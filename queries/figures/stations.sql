-- Stations of a store with their names and period of record.
--
-- Source: the soundings view. Parameters: none.
-- One row per station_id, sorted by station_id:
--   station_name   the longest name given for the station ('' when none)
--   first_time     earliest nominal_time (UTC)
--   last_time      latest nominal_time (UTC)
--   n_soundings    soundings attempted (every row)
--   n_valid        valid soundings (analysed(analysis_status)), the ones the
--                  climatology figures count
SELECT
    station_id,
    coalesce(arg_max(station_name, length(station_name)), '') AS station_name,
    min(nominal_time) AS first_time,
    max(nominal_time) AS last_time,
    count(*) AS n_soundings,
    count(*) FILTER (WHERE analysed(analysis_status)) AS n_valid
FROM soundings
GROUP BY station_id
ORDER BY station_id
