-- The Holzworth lookup: afternoon mixing height as a function of the day's
-- maximum temperature, per station and season, from the morning soundings.
--
-- Source: the CTE `days` (guidance_sample.sql, placed in front by Go), rows
-- with source 'holzworth' only (afternoon_mixing: morning profile lifted
-- dry-adiabatically from the day's maximum temperature).
-- Parameters: $1-$4 as in guidance_sample.sql, and
--   $5  bin width of the maximum temperature in °C (> 0)
--   $6  minimum number of days below which a row is noted
--
-- One row per station, season and temperature bin:
--   tmax_from_c, tmax_to_c   °C; the bin [from, to), from = floor(tmax/$5)·$5
--   n_days                   mornings in the bin
--   n                        with a height (ok, or surface = 0 m)
--   n_undefined              without one
--   pNN_m                    m above ground; percentiles 10/25/50/75/90 (type 7)
--   note                     "n<$6" when n is smaller than $6
-- Days without a maximum temperature are left out.
, b AS (
    SELECT station_id, season, season_name, floor(tmax_c / $5) * $5 AS tmax_from_c, height_m
    FROM days
    WHERE source = 'holzworth' AND tmax_c IS NOT NULL
),
g AS (
    SELECT station_id, season, season_name,
        tmax_from_c,
        tmax_from_c + $5 AS tmax_to_c,
        count(*) AS n_days,
        count(height_m) AS n,
        count(*) - count(height_m) AS n_undefined,
        -- the five percentiles together: one copy of the values per group
        quantile_cont(height_m, [0.10, 0.25, 0.50, 0.75, 0.90]) AS q,
        CASE WHEN count(height_m) < $6 THEN 'n<' || $6 ELSE '' END AS note
    FROM b
    GROUP BY station_id, season, season_name, tmax_from_c
)
SELECT station_id, season, season_name, tmax_from_c, tmax_to_c, n_days, n, n_undefined,
    q[1] AS p10_m, q[2] AS p25_m, q[3] AS p50_m, q[4] AS p75_m, q[5] AS p90_m, note
FROM g
ORDER BY station_id,
    season_rank(season),
    tmax_from_c
