-- Mixing height per month and nominal hour from one method of the
-- mixing_heights table.
--
-- Source: the mixing_heights view joined to soundings on station_id and
-- launch_time. Parameters: $1 station_id, $2 method name.
-- One row per month (1-12) and nominal_hour (h UTC) with at least one valid
-- sounding (analysis_status = 'ok'); columns as in
-- monthly_heights_consensus.sql: surface counts as 0 m, undefined is counted
-- apart, percentiles are quantile_cont (Hyndman & Fan type 7).
WITH v AS (
    SELECT
        s.month,
        s.nominal_hour,
        m.status,
        CASE m.status
            WHEN 'surface' THEN 0.0
            WHEN 'ok' THEN m.height_agl_m
        END AS height_m
    FROM soundings AS s
    JOIN mixing_heights AS m
        ON m.station_id = s.station_id AND m.launch_time = s.launch_time
    WHERE s.station_id = $1 AND s.analysis_status = 'ok' AND m.method = $2
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
