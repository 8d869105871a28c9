-- Mixing height per month and nominal hour, from the consensus of methods
-- (soundings.mixing_height_consensus_m) or from one method of the
-- mixing_heights table.
--
-- Source: the soundings view, joined to mixing_heights on station_id and
-- launch_time for a single method. Parameters: $1 station_id ('' for every
-- station), $2 method name ('consensus' for the consensus of methods).
-- One query serves every station: a store's files are read once, not once
-- per station.
-- One row per station_id, month (1-12) and nominal_hour (h UTC) with at
-- least one valid sounding (analysed(analysis_status)):
--   n_values     soundings whose status is ok or surface
--   n_undefined  soundings whose status is undefined (counted, left out of
--                the percentiles)
--   p10_m … p90_m  m above ground; percentiles of the height, surface
--                counted as 0 m; quantile_cont is Hyndman & Fan type 7
--                (linear interpolation between order statistics)
WITH raw AS (
    SELECT s.station_id, s.month, s.nominal_hour,
        s.mixing_height_consensus_status AS status, s.mixing_height_consensus_m AS h
    FROM soundings AS s
    WHERE ($1 = '' OR s.station_id = $1) AND analysed(s.analysis_status) AND $2 = 'consensus'
    UNION ALL
    SELECT s.station_id, s.month, s.nominal_hour, m.status, m.height_agl_m AS h
    FROM soundings AS s
    JOIN mixing_heights AS m
        ON m.station_id = s.station_id AND m.launch_time = s.launch_time
    WHERE ($1 = '' OR s.station_id = $1) AND ($1 = '' OR m.station_id = $1) AND analysed(s.analysis_status) AND m.method = $2
),
v AS (
    SELECT
        station_id,
        month,
        nominal_hour,
        status,
        mixing_height_m(status, h) AS height_m
    FROM raw
)
SELECT
    station_id,
    month,
    nominal_hour,
    count(height_m) AS n_values,
    count(*) FILTER (WHERE mh_undefined(status) OR height_m IS NULL) AS n_undefined,
    quantile_cont(height_m, 0.10) AS p10_m,
    quantile_cont(height_m, 0.25) AS p25_m,
    quantile_cont(height_m, 0.50) AS p50_m,
    quantile_cont(height_m, 0.75) AS p75_m,
    quantile_cont(height_m, 0.90) AS p90_m
FROM v
GROUP BY station_id, month, nominal_hour
ORDER BY station_id, month, nominal_hour
