-- Ventilation category frequencies per cell.
--
-- Source: the CTE `sample` (climatology_sample.sql, placed in front by Go).
-- Parameters: $1-$6 those of climatology_sample.sql.
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
--   season_name         as in climatology_cells.sql
--
-- Cost: the sample is read once, into `g` (its groups over every
-- sounding, the invalid ones too, for the station's mean latitude), and
-- the rest works on g's few thousand rows.
, g AS (
    SELECT x.station_id, x.season, x.month, x.nominal_hour, x.sun_class, x.ventilation_table,
        coalesce(nullif(x.ventilation_category, ''), 'undefined') AS category,
        count(*) FILTER (WHERE x.valid) AS n,
        min(x.ventilation_index_m2s) FILTER (WHERE x.valid) AS low,
        sum(x.latitude_deg) AS latitude_sum, count(x.latitude_deg) AS latitude_n
    FROM sample x
    GROUP BY ALL
),
r AS (
    SELECT ventilation_table, category,
        rank() OVER (PARTITION BY ventilation_table ORDER BY low, category) AS rank
    FROM (
        SELECT ventilation_table, category,
            CASE WHEN category = 'undefined' THEN 1e300 ELSE min(low) END AS low
        FROM g
        WHERE n > 0
        GROUP BY ventilation_table, category
    )
),
k AS (
    SELECT station_id, season, season_name, month, nominal_hour, sun_class, ventilation_table, category, n
    FROM (
        SELECT *, CASE WHEN season IS NOT NULL THEN season_name(season,
            sum(latitude_sum) OVER w / nullif(sum(latitude_n) OVER w, 0)) END AS season_name
        FROM g
        WINDOW w AS (PARTITION BY station_id)
    )
    WHERE n > 0
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
