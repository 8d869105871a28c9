-- Quality-control status of soundings per station and month, with the rate
-- of soundings excluded from the statistics and the findings per month.
--
-- Source: the soundings view (qc_status) and the qc_findings view, joined on
-- station_id and launch_time; months are those of the nominal time
-- (soundings.year, soundings.month).
-- Parameters: none.
--
-- One row per station_id, year and month:
--   n_soundings            soundings attempted (every row of the month)
--   n_ok                   qc_ok(qc_status)
--   n_suspect              qc_suspect(qc_status) (used, some values flagged)
--   n_insufficient         qc_status starting with 'insufficient' (too little
--                          of the lower troposphere)
--   n_rejected             qc_status starting with 'rejected'
--   excluded_fraction      fraction 0-1; (n_insufficient + n_rejected) / n_soundings
--   n_findings_bad         bad findings, not counting the routine checks
--   n_findings_suspect     suspect findings, not counting the routine checks
--   n_findings_corrected   corrected values
-- Routine checks (listed in qc_findings but not counted here):
-- upstream_removed and cold_humidity.
WITH s AS (
    SELECT station_id, launch_time, year, month, qc_status
    FROM soundings
),
f AS (
    SELECT station_id, launch_time,
        count(*) FILTER (WHERE severity_bad(severity)) AS n_bad,
        count(*) FILTER (WHERE severity_suspect(severity)) AS n_suspect,
        count(*) FILTER (WHERE severity_corrected(severity)) AS n_corrected
    FROM qc_findings
    WHERE NOT qc_routine(qc_check)
    GROUP BY station_id, launch_time
)
SELECT
    s.station_id,
    s.year,
    s.month,
    count(*) AS n_soundings,
    count(*) FILTER (WHERE qc_ok(s.qc_status)) AS n_ok,
    count(*) FILTER (WHERE qc_suspect(s.qc_status)) AS n_suspect,
    count(*) FILTER (WHERE starts_with(s.qc_status, 'insufficient')) AS n_insufficient,
    count(*) FILTER (WHERE starts_with(s.qc_status, 'rejected')) AS n_rejected,
    (count(*) FILTER (WHERE starts_with(s.qc_status, 'insufficient') OR starts_with(s.qc_status, 'rejected')))::DOUBLE
        / count(*) AS excluded_fraction,
    coalesce(sum(f.n_bad), 0)::BIGINT AS n_findings_bad,
    coalesce(sum(f.n_suspect), 0)::BIGINT AS n_findings_suspect,
    coalesce(sum(f.n_corrected), 0)::BIGINT AS n_findings_corrected
FROM s
LEFT JOIN f USING (station_id, launch_time)
GROUP BY s.station_id, s.year, s.month
ORDER BY s.station_id, s.year, s.month
