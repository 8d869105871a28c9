-- Ventilation category frequency by month and nominal hour.
--
-- Source: the soundings view, valid soundings (analysed(analysis_status)).
-- Parameters (bound):
--   $1  VARCHAR[] station ids to keep (empty: all)
--   $2  first and $3 last calendar year kept (inclusive)
--
-- One row per station, month, nominal hour (UTC), category table and
-- category:
--   n_valid      valid soundings of the station, month and hour
--   category     label in the table; "undefined" without a ventilation index
--   n            soundings in the category
--   frequency    n / n_valid
--   rank         order of the category in its table (by the lowest
--                ventilation index seen in it; undefined last)
WITH v AS (
    SELECT station_id, month, nominal_hour, ventilation_table, ventilation_index_m2s,
        coalesce(nullif(ventilation_category, ''), 'undefined') AS category
    FROM soundings
    WHERE analysed(analysis_status)
        AND (len($1::VARCHAR[]) = 0 OR list_contains($1::VARCHAR[], station_id))
        AND year BETWEEN $2 AND $3
),
r AS (
    SELECT ventilation_table, category,
        rank() OVER (PARTITION BY ventilation_table ORDER BY low, category) AS rank
    FROM (
        SELECT ventilation_table, category,
            CASE WHEN category = 'undefined' THEN 1e300 ELSE min(ventilation_index_m2s) END AS low
        FROM v
        GROUP BY ventilation_table, category
    )
),
k AS (
    SELECT station_id, month, nominal_hour, ventilation_table, category, count(*) AS n
    FROM v
    GROUP BY ALL
)
SELECT k.station_id, k.month, k.nominal_hour,
    (sum(k.n) OVER (PARTITION BY k.station_id, k.month, k.nominal_hour))::BIGINT AS n_valid,
    k.ventilation_table, k.category, k.n,
    k.n::DOUBLE / sum(k.n) OVER (PARTITION BY k.station_id, k.month, k.nominal_hour) AS frequency,
    r.rank
FROM k JOIN r USING (ventilation_table, category)
ORDER BY k.station_id, k.month, k.nominal_hour, k.ventilation_table, r.rank
