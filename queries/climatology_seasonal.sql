-- Seasonal boundary-layer climatology per station, season and nominal hour.
--
-- Source: the soundings view (one row per radiosonde ascent).
-- Parameters: none.
--
-- One row per station_id, season (DJF, MAM, JJA, SON, in that order; rows with
-- any other season label sort last) and nominal_hour (h UTC):
--   n_soundings              soundings attempted (every row of the group)
--   n_valid                  soundings with analysis_status = 'ok'
--   n_parcel_ok              valid soundings whose parcel mixing height has status ok
--   n_parcel_surface         valid soundings whose parcel status is surface (counted as 0 m)
--   n_parcel_undefined       valid soundings whose parcel status is undefined; they are
--                            counted here and left out of the percentiles
--   mixing_height_pNN_m      m above ground; percentiles 10, 25, 50, 75, 90 of
--                            mixing_height_parcel_m over valid soundings with parcel
--                            status ok or surface (surface = 0 m)
--   sbi_frequency            fraction 0-1; valid soundings with a surface-based
--                            inversion divided by n_valid (null when n_valid = 0)
--   sbi_median_strength_k    K; median sbi_strength_k over valid soundings with an SBI
--   sbi_median_top_agl_m     m above ground; median sbi_top_agl_m over the same soundings
--
-- Percentiles use quantile_cont: Hyndman & Fan type 7, linear interpolation
-- between order statistics, Q(p) = x[h0] + (h - h0)(x[h0+1] - x[h0]) with
-- h = (n - 1) p and h0 = floor(h) on 0-based sorted x. A statistic over no
-- values is null.
WITH s AS (
    SELECT
        station_id,
        season,
        nominal_hour,
        analysis_status = 'ok' AS valid,
        mixing_height_parcel_status AS parcel_status,
        CASE mixing_height_parcel_status
            WHEN 'surface' THEN 0.0
            WHEN 'ok' THEN mixing_height_parcel_m
        END AS mixing_height_m,
        sbi_present,
        sbi_strength_k,
        sbi_top_agl_m
    FROM soundings
)
SELECT
    station_id,
    season,
    nominal_hour,
    count(*) AS n_soundings,
    count(*) FILTER (WHERE valid) AS n_valid,
    count(*) FILTER (WHERE valid AND parcel_status = 'ok') AS n_parcel_ok,
    count(*) FILTER (WHERE valid AND parcel_status = 'surface') AS n_parcel_surface,
    count(*) FILTER (WHERE valid AND parcel_status = 'undefined') AS n_parcel_undefined,
    quantile_cont(mixing_height_m, 0.10) FILTER (WHERE valid) AS mixing_height_p10_m,
    quantile_cont(mixing_height_m, 0.25) FILTER (WHERE valid) AS mixing_height_p25_m,
    quantile_cont(mixing_height_m, 0.50) FILTER (WHERE valid) AS mixing_height_p50_m,
    quantile_cont(mixing_height_m, 0.75) FILTER (WHERE valid) AS mixing_height_p75_m,
    quantile_cont(mixing_height_m, 0.90) FILTER (WHERE valid) AS mixing_height_p90_m,
    count(*) FILTER (WHERE valid AND sbi_present)::DOUBLE
        / nullif(count(*) FILTER (WHERE valid), 0) AS sbi_frequency,
    quantile_cont(sbi_strength_k, 0.5) FILTER (WHERE valid AND sbi_present) AS sbi_median_strength_k,
    quantile_cont(sbi_top_agl_m, 0.5) FILTER (WHERE valid AND sbi_present) AS sbi_median_top_agl_m
FROM s
GROUP BY station_id, season, nominal_hour
ORDER BY
    station_id,
    CASE season WHEN 'DJF' THEN 1 WHEN 'MAM' THEN 2 WHEN 'JJA' THEN 3 WHEN 'SON' THEN 4 ELSE 5 END,
    season,
    nominal_hour
