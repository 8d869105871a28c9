-- Yearly statistics per station, season and nominal hour, the input of the
-- trend tests (which run in Go: analyze/stats).
--
-- Source: the soundings view.
-- Parameters (bound):
--   $1  VARCHAR[] station ids to keep (empty: all)
--   $2  first and $3 last season_year kept (inclusive)
--   $4  metric: mixing_height (consensus, surface = 0 m, undefined left out),
--       parcel_height (the same for the parcel method), sbi_frequency
--       (fraction of valid soundings with a surface-based inversion),
--       sbi_strength (K, where an SBI occurs), sbi_depth (m, where an SBI
--       occurs), mixed_layer_depth (m, where a mixed layer exists),
--       transport_wind (m/s), ventilation_index (m2/s)
--
-- One row per station, season, nominal hour and season_year:
--   n_soundings       soundings attempted
--   n_valid           soundings with analysed(analysis_status)
--   n_values          valid soundings with a value of the metric
--   value             the year's median of the metric (type 7), or the
--                     fraction for sbi_frequency; null without values
--   median_levels     median level_count of all the station's soundings
--                     in that season_year (every season and hour): the
--                     input of the instrument/practice-change warning
WITH s AS (
    SELECT station_id, season, nominal_hour, season_year, level_count,
        analysed(analysis_status) AS valid,
        CASE $4
            WHEN 'mixing_height' THEN mixing_height_m(mixing_height_consensus_status, mixing_height_consensus_m)
            WHEN 'parcel_height' THEN mixing_height_m(mixing_height_parcel_status, mixing_height_parcel_m)
            WHEN 'sbi_frequency' THEN CASE WHEN sbi_present THEN 1.0 WHEN NOT sbi_present THEN 0.0 END
            WHEN 'sbi_strength' THEN CASE WHEN sbi_present THEN sbi_strength_k END
            WHEN 'sbi_depth' THEN CASE WHEN sbi_present THEN sbi_top_agl_m END
            WHEN 'mixed_layer_depth' THEN CASE WHEN mixed_layer_levels > 0 THEN mixed_layer_top_agl_m - mixed_layer_base_agl_m END
            WHEN 'transport_wind' THEN transport_wind_ms
            WHEN 'ventilation_index' THEN ventilation_index_m2s
        END AS v
    FROM soundings
    WHERE (len($1::VARCHAR[]) = 0 OR list_contains($1::VARCHAR[], station_id))
        AND season_year BETWEEN $2 AND $3
),
lv AS (
    SELECT station_id, season_year, quantile_cont(level_count, 0.5) AS median_levels
    FROM s
    GROUP BY ALL
)
SELECT s.station_id, s.season, s.nominal_hour, s.season_year,
    count(*) AS n_soundings,
    count(*) FILTER (WHERE s.valid) AS n_valid,
    count(s.v) FILTER (WHERE s.valid) AS n_values,
    CASE WHEN $4 = 'sbi_frequency' THEN avg(s.v) FILTER (WHERE s.valid)
        ELSE quantile_cont(s.v, 0.5) FILTER (WHERE s.valid) END AS value,
    any_value(lv.median_levels) AS median_levels
FROM s JOIN lv USING (station_id, season_year)
GROUP BY s.station_id, s.season, s.nominal_hour, s.season_year
ORDER BY s.station_id,
    season_rank(s.season),
    s.nominal_hour, s.season_year
