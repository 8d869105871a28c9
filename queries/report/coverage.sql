-- Data coverage per station and year.
--
-- Source: the soundings view. Parameters: $1 station_id, or '' for all.
-- One row per station_id and year (of the nominal time):
--   n_attempted      soundings in the store (every row)
--   n_valid          soundings analysed (analysed(analysis_status)); the
--                    climatology uses these
--   n_qc_excluded    soundings that quality control rejected or found
--                    insufficient (qc_status 'rejected:…' or 'insufficient:…')
--   n_not_analysable other soundings that could not be analysed (e.g. no
--                    surface level)
--   n_qc_suspect     valid soundings with values quality control flagged as
--                    suspect (qc_suspect(qc_status))
SELECT
    station_id,
    year,
    count(*) AS n_attempted,
    count(*) FILTER (WHERE analysed(analysis_status)) AS n_valid,
    count(*) FILTER (WHERE qc_status LIKE 'rejected%' OR qc_status LIKE 'insufficient%') AS n_qc_excluded,
    count(*) FILTER (WHERE NOT analysed(analysis_status)
        AND NOT (qc_status LIKE 'rejected%' OR qc_status LIKE 'insufficient%')) AS n_not_analysable,
    count(*) FILTER (WHERE analysed(analysis_status) AND qc_suspect(qc_status)) AS n_qc_suspect
FROM soundings
WHERE $1 = '' OR station_id = $1
GROUP BY station_id, year
ORDER BY station_id, year
