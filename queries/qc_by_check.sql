-- Quality-control findings per station, check and severity.
--
-- Source: the qc_findings view (one row per finding) and the soundings view
-- (one row per sounding, for the number of soundings per station).
-- Parameters: none.
--
-- One row per station_id, qc_check and severity (ordered by station, then
-- by the number of findings, most first, then check and severity):
--   n_findings          findings of this check and severity
--   n_soundings         distinct soundings with at least one such finding
--   sounding_fraction   fraction 0-1; n_soundings divided by all soundings of
--                       the station in the soundings view
--   n_levels            distinct levels with such a finding (whole-sounding
--                       findings, level_index -1, are not levels)
--   routine             true for upstream_removed (values the archive's own
--                       quality control removed) and cold_humidity, which do
--                       not change a sounding's status
WITH per_station AS (
    SELECT station_id, count(*) AS n_station
    FROM soundings
    GROUP BY station_id
)
SELECT
    f.station_id,
    f.qc_check,
    f.severity,
    count(*) AS n_findings,
    count(DISTINCT f.launch_time) AS n_soundings,
    count(DISTINCT f.launch_time)::DOUBLE / nullif(max(p.n_station), 0) AS sounding_fraction,
    count(DISTINCT CASE WHEN f.level_index >= 0 THEN f.launch_time::VARCHAR || '#' || f.level_index::VARCHAR END) AS n_levels,
    qc_routine(f.qc_check) AS routine
FROM qc_findings AS f
LEFT JOIN per_station AS p USING (station_id)
GROUP BY f.station_id, f.qc_check, f.severity
ORDER BY f.station_id, n_findings DESC, f.qc_check, f.severity
