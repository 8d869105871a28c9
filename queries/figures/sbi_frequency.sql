-- Surface-based inversion frequency per month and nominal hour.
--
-- Source: the soundings view. Parameters: $1 station_id ('' for every
-- station).
-- One row per station_id, month (1-12) and nominal_hour (h UTC) with at least one valid
-- sounding (analysed(analysis_status) and sbi_present not null):
--   n_valid  valid soundings
--   n_sbi    of those, soundings with a surface-based inversion
SELECT
    station_id,
    month,
    nominal_hour,
    count(*) AS n_valid,
    count(*) FILTER (WHERE sbi_present) AS n_sbi
FROM soundings
WHERE ($1 = '' OR station_id = $1) AND analysed(analysis_status) AND sbi_present IS NOT NULL
GROUP BY station_id, month, nominal_hour
ORDER BY station_id, month, nominal_hour
