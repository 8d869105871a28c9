-- Afternoon mixing height by season and by the strength class of the
-- morning surface-based inversion (SBI), with the probability of staying
-- below given heights.
--
-- Source: the CTE `days` (guidance_sample.sql, placed in front by Go).
-- Parameters: $1-$4 as in guidance_sample.sql, and
--   $5  DOUBLE[] heights in m above ground, e.g. [600, 1000, 1500]
--   $6  minimum number of days below which a row is noted (25: METHODS §8
--       for p10/p90)
--
-- One row per station, season, SBI class, source and height of $5:
--   source        holzworth: Holzworth afternoon height (morning profile +
--                 the day's maximum temperature, afternoon_mixing);
--                 later_sounding: consensus height of the same local
--                 day's later sounding (12-20 h local mean solar time:
--                 afternoon or, for US 00 UTC launches, early evening)
--   n_days        days with a valid morning sounding in the class
--   n             days with a height (status ok or surface = 0 m)
--   n_undefined   days without one (undefined, or no afternoon sounding)
--   pNN_m         m above ground; percentiles 10/25/50/75/90 (type 7)
--   below_m       the height of $5
--   n_below       days with height < below_m
--   p_below       n_below / n: the probability of staying below below_m
--   note          "n<$6" when n is smaller than $6
, stats AS (
    SELECT station_id, season, season_name, sbi_rank, sbi_class, source,
        count(*) AS n_days,
        count(height_m) AS n,
        count(*) - count(height_m) AS n_undefined,
        -- the five percentiles together: one copy of the values per group
        quantile_cont(height_m, [0.10, 0.25, 0.50, 0.75, 0.90]) AS q
    FROM days
    GROUP BY ALL
),
below AS (
    SELECT d.station_id, d.season, d.sbi_rank, d.source, b.below_m,
        count(*) FILTER (WHERE d.height_m < b.below_m) AS n_below
    FROM days d
    CROSS JOIN (SELECT unnest($5::DOUBLE[]) AS below_m) b
    GROUP BY ALL
)
SELECT s.* EXCLUDE (q),
    s.q[1] AS p10_m, s.q[2] AS p25_m, s.q[3] AS p50_m, s.q[4] AS p75_m, s.q[5] AS p90_m,
    b.below_m, b.n_below,
    b.n_below::DOUBLE / nullif(s.n, 0) AS p_below,
    CASE WHEN s.n < $6 THEN 'n<' || $6 ELSE '' END AS note
FROM stats s
JOIN below b USING (station_id, season, sbi_rank, source)
ORDER BY station_id,
    season_rank(season),
    sbi_rank, source = 'later_sounding', below_m
