-- Boundary-layer climatology per cell: station × period (season or month)
-- × time of day (nominal hour or sun class).
--
-- Source: the CTE `sample` (climatology_sample.sql, placed in front by Go).
-- Parameters: $1-$6 those of climatology_sample.sql ($1 'season' or
-- 'month'), then
--   $7  minimum valid soundings of a cell (METHODS §8: 15 per month, 45 per season)
--   $8  minimum values for p10/p90 (METHODS §8: 25)
--
-- One row per cell, ordered by station, period and time of day:
--   season_name                    winter/spring/summer/autumn by the station's mean
--                                  latitude over the soundings kept (< 0 flips the
--                                  label, the code stays; null when unknown, since the
--                                  hemisphere is then unknown); null in month mode
--   n_soundings                    soundings attempted
--   n_valid                        soundings with analysed(analysis_status)
--   n_consensus_ok/_surface/_undefined  valid soundings by consensus status
--   mixing_height_pNN_m            m above ground; percentiles 10/25/50/75/90 of
--                                  the consensus mixing height of valid soundings,
--                                  surface counted as 0 m, undefined left out
--   sbi_frequency                  fraction 0-1 of valid soundings with a surface-based inversion
--   sbi_median_strength_k          K; median strength where an SBI occurs
--   sbi_median_depth_m             m; median depth (= top above ground) where an SBI occurs
--   ei_frequency                   fraction of valid soundings with at least one elevated inversion
--   ei_<class>_frequency           fraction whose lowest elevated inversion has class subsidence,
--                                  frontal, capping or unclassified
--
-- Which frequencies may overlap: every inversion is one that passes the
-- significance rule of the analysis (analyze.InversionConfig) and has
-- exactly one class. The four ei_<class>_frequency are exclusive (one
-- class per sounding, that of its lowest elevated inversion) and add up to
-- ei_frequency. sbi_frequency and ei_frequency overlap: one sounding may
-- hold a surface-based and an elevated inversion, so their sum may exceed 1.
--   ml_frequency                   fraction of valid soundings with a well-mixed layer
--   ml_depth_p25/p50/p75_m         m; depth of the lowest mixed layer where there is one
--   ml_theta_median_k              K; median of its mass-weighted mean potential temperature
--   ml_mixing_ratio_median_gkg     g/kg; median of its mass-weighted mean mixing ratio
--   n_ventilation                  valid soundings with a ventilation index
--   transport_wind_p25/p50/p75_ms  m/s; transport wind
--   ventilation_index_pNN_m2s      m2/s; percentiles 10/25/50/75/90 of the ventilation index
--   ventilation_index_pNN_ktft     kt*ft; the same percentiles in knot-feet, the unit of
--                                  fire-weather practice (1 m2/s = 3600/1852/0.3048 =
--                                  6.37744 kt*ft, analyze.KtFtPerM2S; type-7 percentiles
--                                  scale with the unit, so they are the m2/s ones times it)
--   ventilation_table              category table(s) of the store, comma-separated
--   note                           empty, or the special hours the cell holds
--                                  ("with 06 UTC"; "other hours: 06,18 UTC" for
--                                  the cell of hours near no regular hour), and
--                                  why the cell is thin: "n_valid<$7",
--                                  "p10/p90 n<$8" (consensus heights), "month n<10"
--                                  (season mode: a month of the season has fewer than
--                                  10 valid soundings; METHODS §8)
--
-- Percentiles are quantile_cont: Hyndman & Fan type 7, h = (n-1)p on 0-based
-- sorted x, linear interpolation. A statistic over no values is null;
-- frequencies are null when n_valid = 0.
, a AS (
    -- Percentiles of one quantity are computed together (a list), which
    -- keeps one copy of the values per cell instead of one per percentile.
    SELECT
        x.station_id, x.season, x.month, x.nominal_hour, x.sun_class,
        -- for the station's mean latitude (season_name, in c)
        sum(x.latitude_deg) AS latitude_sum, count(x.latitude_deg) AS latitude_n,
        count(*) AS n_soundings,
        count(CASE WHEN x.valid THEN 1 END) AS n_valid,
        count(CASE WHEN x.valid AND mh_ok(x.consensus_status) THEN 1 END) AS n_consensus_ok,
        count(CASE WHEN x.valid AND mh_surface(x.consensus_status) THEN 1 END) AS n_consensus_surface,
        count(CASE WHEN x.valid AND NOT mh_defined(x.consensus_status) THEN 1 END) AS n_consensus_undefined,
        quantile_cont(CASE WHEN x.valid THEN x.consensus_m END, [0.10, 0.25, 0.50, 0.75, 0.90]) AS mixing_height_q,
        count(CASE WHEN x.valid AND x.sbi_present THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS sbi_frequency,
        quantile_cont(CASE WHEN x.valid AND x.sbi_present THEN x.sbi_strength_k END, 0.5) AS sbi_median_strength_k,
        quantile_cont(CASE WHEN x.valid AND x.sbi_present THEN x.sbi_top_agl_m END, 0.5) AS sbi_median_depth_m,
        count(CASE WHEN x.valid AND coalesce(x.ei_class, '') <> '' THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS ei_frequency,
        count(CASE WHEN x.valid AND x.ei_class = 'subsidence' THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS ei_subsidence_frequency,
        count(CASE WHEN x.valid AND x.ei_class = 'frontal' THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS ei_frontal_frequency,
        count(CASE WHEN x.valid AND x.ei_class = 'capping' THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS ei_capping_frequency,
        count(CASE WHEN x.valid AND x.ei_class = 'unclassified' THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS ei_unclassified_frequency,
        count(CASE WHEN x.valid AND x.ml_present THEN 1 END)::DOUBLE / nullif(count(CASE WHEN x.valid THEN 1 END), 0) AS ml_frequency,
        quantile_cont(CASE WHEN x.valid AND x.ml_present THEN x.ml_depth_m END, [0.25, 0.50, 0.75]) AS ml_depth_q,
        quantile_cont(CASE WHEN x.valid AND x.ml_present THEN x.mixed_layer_theta_k END, 0.5) AS ml_theta_median_k,
        quantile_cont(CASE WHEN x.valid AND x.ml_present THEN x.mixed_layer_mixing_ratio_gkg END, 0.5) AS ml_mixing_ratio_median_gkg,
        count(CASE WHEN x.valid THEN x.ventilation_index_m2s END) AS n_ventilation,
        quantile_cont(CASE WHEN x.valid THEN x.transport_wind_ms END, [0.25, 0.50, 0.75]) AS transport_wind_q,
        quantile_cont(CASE WHEN x.valid THEN x.ventilation_index_m2s END, [0.10, 0.25, 0.50, 0.75, 0.90]) AS ventilation_index_q,
        coalesce(string_agg(DISTINCT nullif(x.ventilation_table, ''), ',' ORDER BY nullif(x.ventilation_table, '')), '') AS ventilation_table,
        least(
            count(CASE WHEN x.valid AND x.calendar_month % 3 = 0 THEN 1 END),
            count(CASE WHEN x.valid AND x.calendar_month % 3 = 1 THEN 1 END),
            count(CASE WHEN x.valid AND x.calendar_month % 3 = 2 THEN 1 END)) AS n_fewest_month,
        string_agg(DISTINCT lpad(x.hour_given::VARCHAR, 2, '0'), ',' ORDER BY lpad(x.hour_given::VARCHAR, 2, '0'))
            FILTER (WHERE x.nominal_hour IS DISTINCT FROM x.hour_given AND x.sun_class IS NULL) AS hours_pooled
    FROM sample x
    GROUP BY x.station_id, x.season, x.month, x.nominal_hour, x.sun_class
),
c AS (
    SELECT
        station_id, season,
        CASE WHEN season IS NOT NULL THEN season_name(season,
            sum(latitude_sum) OVER (PARTITION BY station_id) / nullif(sum(latitude_n) OVER (PARTITION BY station_id), 0)) END AS season_name,
        month, nominal_hour, sun_class,
        n_soundings, n_valid, n_consensus_ok, n_consensus_surface, n_consensus_undefined,
        mixing_height_q[1] AS mixing_height_p10_m,
        mixing_height_q[2] AS mixing_height_p25_m,
        mixing_height_q[3] AS mixing_height_p50_m,
        mixing_height_q[4] AS mixing_height_p75_m,
        mixing_height_q[5] AS mixing_height_p90_m,
        sbi_frequency, sbi_median_strength_k, sbi_median_depth_m,
        ei_frequency, ei_subsidence_frequency, ei_frontal_frequency, ei_capping_frequency, ei_unclassified_frequency,
        ml_frequency,
        ml_depth_q[1] AS ml_depth_p25_m,
        ml_depth_q[2] AS ml_depth_p50_m,
        ml_depth_q[3] AS ml_depth_p75_m,
        ml_theta_median_k, ml_mixing_ratio_median_gkg, n_ventilation,
        transport_wind_q[1] AS transport_wind_p25_ms,
        transport_wind_q[2] AS transport_wind_p50_ms,
        transport_wind_q[3] AS transport_wind_p75_ms,
        ventilation_index_q[1] AS ventilation_index_p10_m2s,
        ventilation_index_q[2] AS ventilation_index_p25_m2s,
        ventilation_index_q[3] AS ventilation_index_p50_m2s,
        ventilation_index_q[4] AS ventilation_index_p75_m2s,
        ventilation_index_q[5] AS ventilation_index_p90_m2s,
        ventilation_index_q[1] * (3600.0 / 1852 / 0.3048) AS ventilation_index_p10_ktft,
        ventilation_index_q[2] * (3600.0 / 1852 / 0.3048) AS ventilation_index_p25_ktft,
        ventilation_index_q[3] * (3600.0 / 1852 / 0.3048) AS ventilation_index_p50_ktft,
        ventilation_index_q[4] * (3600.0 / 1852 / 0.3048) AS ventilation_index_p75_ktft,
        ventilation_index_q[5] * (3600.0 / 1852 / 0.3048) AS ventilation_index_p90_ktft,
        ventilation_table, n_fewest_month, hours_pooled
    FROM a
)
SELECT
    * EXCLUDE (n_fewest_month, hours_pooled),
    concat_ws('; ',
        CASE WHEN hours_pooled IS NOT NULL AND nominal_hour IS NULL THEN 'other hours: ' || hours_pooled || ' UTC' END,
        CASE WHEN hours_pooled IS NOT NULL AND nominal_hour IS NOT NULL THEN 'with ' || hours_pooled || ' UTC' END,
        CASE WHEN n_valid < $7 THEN 'n_valid<' || $7 END,
        CASE WHEN n_consensus_ok + n_consensus_surface < $8 THEN 'p10/p90 n<' || $8 END,
        CASE WHEN $1 = 'season' AND n_fewest_month < 10 THEN 'month n<10' END) AS note
FROM c
ORDER BY
    station_id,
    season_rank(season),
    month,
    nominal_hour,
    sun_class_rank(sun_class)
