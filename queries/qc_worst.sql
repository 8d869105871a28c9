-- The soundings with the most quality-control findings, with every finding.
--
-- Source: the soundings view (qc_status) and the qc_findings view, joined on
-- station_id and launch_time.
-- Parameters: $1 (INTEGER) the number of soundings to list.
--
-- Soundings are ranked by bad findings (most first), then suspect findings,
-- then corrected values, then station and launch time; the routine checks
-- upstream_removed and cold_humidity neither count nor are listed, and a
-- sounding needs at least one other finding to be listed. One row per
-- finding of the listed soundings, in rank order and then by level:
--   rank                  1 for the worst sounding
--   station_id, launch_time, qc_status
--   n_bad, n_suspect      the sounding's counts used for the rank
--   level_index           -1 for a finding about the whole sounding
--   pressure_hpa          hPa; the level's pressure (null when none)
--   variable, qc_check, severity, value, corrected_value, message
--                         as in qc_findings
WITH f AS (
    SELECT *
    FROM qc_findings
    WHERE NOT qc_routine(qc_check)
),
counts AS (
    SELECT station_id, launch_time,
        count(*) FILTER (WHERE severity_bad(severity)) AS n_bad,
        count(*) FILTER (WHERE severity_suspect(severity)) AS n_suspect,
        count(*) FILTER (WHERE severity_corrected(severity)) AS n_corrected
    FROM f
    GROUP BY station_id, launch_time
),
ranked AS (
    SELECT c.*, s.qc_status,
        row_number() OVER (ORDER BY c.n_bad DESC, c.n_suspect DESC, c.n_corrected DESC, c.station_id, c.launch_time) AS rank
    FROM counts AS c
    LEFT JOIN soundings AS s USING (station_id, launch_time)
)
SELECT
    r.rank,
    r.station_id,
    r.launch_time,
    r.qc_status,
    r.n_bad,
    r.n_suspect,
    f.level_index,
    f.pressure_hpa,
    f.variable,
    f.qc_check,
    f.severity,
    f.value,
    f.corrected_value,
    f.message
FROM ranked AS r
JOIN f USING (station_id, launch_time)
WHERE r.rank <= $1
ORDER BY r.rank, f.level_index, f.variable, f.qc_check
