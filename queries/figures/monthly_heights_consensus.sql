-- Mixing height per month and nominal hour from the consensus of methods.
--
-- Source: the soundings view. Parameters: $1 station_id.
-- One row per month (1-12) and nominal_hour (h UTC) with at least one valid
-- sounding (analysis_status = 'ok'):
--   n_values     soundings whose consensus status is ok or surface
--   n_undefined  soundings whose consensus status is undefined (counted,
--                left out of the percentiles)
--   p10_m … p90_m  m above ground; percentiles of mixing_height_consensus_m,
--                surface counted as 0 m; quantile_cont is Hyndman & Fan
--                type 7 (linear interpolation between order statistics)
WITH v AS (
    SELECT
        month,
        nominal_hour,
        mixing_height_consensus_status AS status,
        CASE mixing_height_consensus_status
            WHEN 'surface' THEN 0.0
            WHEN 'ok' THEN mixing_height_consensus_m
        END AS height_m
    FROM soundings
    WHERE station_id = $1 AND analysis_status = 'ok'
)
SELECT
    month,
    nominal_hour,
    count(height_m) AS n_values,
    count(*) FILTER (WHERE status = 'undefined' OR height_m IS NULL) AS n_undefined,
    quantile_cont(height_m, 0.10) AS p10_m,
    quantile_cont(height_m, 0.25) AS p25_m,
    quantile_cont(height_m, 0.50) AS p50_m,
    quantile_cont(height_m, 0.75) AS p75_m,
    quantile_cont(height_m, 0.90) AS p90_m
FROM v
GROUP BY month, nominal_hour
ORDER BY month, nominal_hour
