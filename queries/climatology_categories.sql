-- Ventilation category frequencies per cell.
--
-- Source: the CTE `sample` (climatology_sample.sql, placed in front by Go).
-- Parameters: none (the sample is built first, with its own, as a
-- temporary table named sample).
--
-- One row per cell, category table and category, over valid soundings:
--   ventilation_table   name of the category table (as stored per sounding)
--   category            the category label; "undefined" for valid soundings
--                       without a ventilation index (no mixing height or wind)
--   n                   valid soundings in the category
--   frequency           fraction 0-1; n over the valid soundings of the cell
--   rank                order of the category within its table: by the lowest
--                       ventilation index seen in it over the whole sample
--                       (undefined last), so labels sort from poor to good
--                       whatever their spelling
, v AS (
    SELECT x.*, coalesce(nullif(x.ventilation_category, ''), 'undefined') AS category
    FROM sample x
    WHERE x.valid
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
    SELECT station_id, season, season_name, month, nominal_hour, sun_class,
        ventilation_table, category, count(*) AS n
    FROM v
    GROUP BY ALL
)
SELECT
    k.*,
    k.n::DOUBLE / sum(k.n) OVER (PARTITION BY k.station_id, k.season, k.month, k.nominal_hour, k.sun_class) AS frequency,
    r.rank
FROM k JOIN r USING (ventilation_table, category)
ORDER BY
    k.station_id,
    season_rank(k.season),
    k.month,
    k.nominal_hour,
    sun_class_rank(k.sun_class),
    k.ventilation_table,
    r.rank
