-- Mixing-height percentiles per cell and method: every method of the
-- mixing_heights table, and the consensus of the soundings table.
--
-- Source: the CTE `sample` (climatology_sample.sql, placed in front by Go)
-- joined with the mixing_heights view on station_id and launch_time.
-- Parameters: $1-$6 those of climatology_sample.sql, $7 the minimum valid
-- soundings of a cell, $8 the minimum values for p10/p90.
--
-- One row per cell and method (consensus first, then the methods in the
-- order of the analyze method registry: the method_rank macro,
-- queries/macros.go), over valid soundings only:
--   method                 consensus, or a registered method
--   n_valid                valid soundings of the cell with a row for the method
--   n_ok, n_surface, n_undefined   by status; undefined is counted here and
--                          left out of the percentiles
--   pNN_m                  m above ground; percentiles 10/25/50/75/90 (type 7,
--                          quantile_cont) of the heights, surface counted as 0 m
--   note                   "n_valid<$7" and/or "p10/p90 n<$8" (n = n_ok + n_surface)
--
-- Cost: the heights are grouped by a cell number and the method, not by
-- the six key columns of the cell (text among them), and the keys are
-- joined back to the 1,000-odd result rows: on the bench archive's 600
-- station-years (3.9 million heights) the grouping on the keys was most
-- of the statement's time. season_name as in climatology_cells.sql.
, cells AS (
    SELECT station_id, season, month, nominal_hour, sun_class, bool_or(valid) AS any_valid,
        sum(latitude_deg) AS latitude_sum, count(latitude_deg) AS latitude_n
    FROM sample
    GROUP BY station_id, season, month, nominal_hour, sun_class
),
keys AS (
    SELECT station_id, season, season_name, month, nominal_hour, sun_class, row_number() OVER () AS cell
    FROM (
        SELECT *, CASE WHEN season IS NOT NULL THEN season_name(season,
            sum(latitude_sum) OVER w / nullif(sum(latitude_n) OVER w, 0)) END AS season_name
        FROM cells
        WINDOW w AS (PARTITION BY station_id)
    )
    WHERE any_valid
),
x AS (
    SELECT k.cell, s.station_id, s.launch_time, s.consensus_status, s.consensus_m
    FROM sample s
    JOIN keys k ON k.station_id = s.station_id
        AND k.season IS NOT DISTINCT FROM s.season
        AND k.month IS NOT DISTINCT FROM s.month
        AND k.nominal_hour IS NOT DISTINCT FROM s.nominal_hour
        AND k.sun_class IS NOT DISTINCT FROM s.sun_class
    WHERE s.valid
),
m AS (
    SELECT x.cell, 'consensus' AS method, x.consensus_status AS status, x.consensus_m AS height_m
    FROM x
    UNION ALL
    SELECT x.cell, h.method, h.status,
        mixing_height_m(h.status, h.height_agl_m)
    FROM x
    JOIN mixing_heights h USING (station_id, launch_time)
),
c AS (
    SELECT
        cell, method,
        count(*) AS n_valid,
        count(*) FILTER (WHERE mh_ok(status)) AS n_ok,
        count(*) FILTER (WHERE mh_surface(status)) AS n_surface,
        count(*) FILTER (WHERE NOT mh_defined(status)) AS n_undefined,
        -- the five percentiles together: one copy of the values per cell
        quantile_cont(height_m, [0.10, 0.25, 0.50, 0.75, 0.90]) AS q
    FROM m
    GROUP BY cell, method
)
SELECT
    k.station_id, k.season, k.season_name, k.month, k.nominal_hour, k.sun_class, c.method,
    c.n_valid, c.n_ok, c.n_surface, c.n_undefined,
    q[1] AS p10_m, q[2] AS p25_m, q[3] AS p50_m, q[4] AS p75_m, q[5] AS p90_m,
    concat_ws('; ',
        CASE WHEN n_valid < $7 THEN 'n_valid<' || $7 END,
        CASE WHEN n_ok + n_surface < $8 THEN 'p10/p90 n<' || $8 END) AS note
FROM c
JOIN keys k USING (cell)
ORDER BY
    k.station_id,
    season_rank(k.season),
    k.month,
    k.nominal_hour,
    sun_class_rank(k.sun_class),
    method_rank(c.method),
    c.method
