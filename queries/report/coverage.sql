-- Data coverage per station and year.
--
-- Source: the soundings view. Parameters: $1 station_id, or '' for all.
-- One row per station_id and year (of the nominal time):
--   n_attempted      soundings in the store (every row)
--   n_valid          soundings analysed (analysis_status = 'ok'); the
--                    climatology uses these
--   n_qc_excluded    soundings that quality control rejected or found
--                    insufficient (qc_status 'rejected:…' or 'insufficient:…')
--   n_not_analysable other soundings that could not be analysed (e.g. no
--                    surface level)
--   n_qc_suspect     valid soundings with values quality control flagged as
--                    suspect (qc_status = 'suspect')
SELECT
    station_id,
    year,
    count(*) AS n_attempted,
    count(*) FILTER (WHERE analysis_status = 'ok') AS n_valid,
    count(*) FILTER (WHERE qc_status LIKE 'rejected%' OR qc_status LIKE 'insufficient%') AS n_qc_excluded,
    count(*) FILTER (WHERE analysis_status <> 'ok'
        AND NOT (qc_status LIKE 'rejected%' OR qc_status LIKE 'insufficient%')) AS n_not_analysable,
    count(*) FILTER (WHERE analysis_status = 'ok' AND qc_status = 'suspect') AS n_qc_suspect
FROM soundings
WHERE $1 = '' OR station_id = $1
GROUP BY station_id, year
ORDER BY station_id, year
