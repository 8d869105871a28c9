-- The days of the forecasters' tables: one row per station, local solar day,
-- morning SBI class and source of the afternoon mixing height. This text is
-- the body of the common table expression `days` that Go places in front of
-- guidance_afternoon.sql and guidance_holzworth.sql.
--
-- Source: the afternoon_mixing view (one row per morning sounding, with the
-- Holzworth afternoon mixing height from the morning profile and the day's
-- maximum temperature) joined with the soundings view twice: the morning
-- sounding itself (season, surface-based inversion) and the same local
-- day's afternoon sounding (consensus mixing height).
-- Parameters (bound):
--   $1  VARCHAR[] station ids to keep (empty: all)
--   $2  first and $3 last season_year kept (inclusive)
--   $4  DOUBLE[] ascending SBI strength class limits in K, e.g. [0, 2, 5]:
--       classes none (no SBI), <l1, l1-l2, …, >=ln (a limit of 0 gives no
--       "<0" class in practice: strengths are positive)
--
-- Local solar day and time follow analyze/sun: local mean solar time
-- LMST = UTC + longitude/15 h, the day is the date at that time; an
-- afternoon sounding has 12 <= LMST < 20 h (the pipeline's pairing window)
-- and a valid analysis; if a day has several, the one nearest 15 h LMST.
--
-- Columns: station_id, season, season_name (flipped south of the equator),
-- season_year, local_day, sbi_rank (0 none, 1… by strength), sbi_class,
-- tmax_c, source ('holzworth' or 'later_sounding'), status (ok,
-- surface, undefined, or no_sounding when the day had no afternoon
-- sounding), height_m (m above ground; 0 for surface, null otherwise).
WITH snd AS (
    SELECT s.*,
        avg(nullif(s.latitude_deg, 'NaN'::DOUBLE)) OVER (PARTITION BY s.station_id) AS station_lat,
        CAST(s.launch_time + to_microseconds(CAST(round(s.longitude_deg / 15 * 3.6e9) AS BIGINT)) AS DATE) AS local_day,
        ((epoch(s.launch_time) / 3600 + s.longitude_deg / 15) % 24 + 24) % 24 AS lmst_h
    FROM soundings s
    WHERE len($1::VARCHAR[]) = 0 OR list_contains($1::VARCHAR[], s.station_id)
),
morning AS (
    SELECT
        a.station_id,
        m.season,
        season_name(m.season, m.station_lat) AS season_name,
        m.season_year,
        CAST(a.local_date AS DATE) AS local_day,
        CASE WHEN m.sbi_present THEN len(list_filter($4::DOUBLE[], l -> l <= m.sbi_strength_k)) + 1 ELSE 0 END AS sbi_rank,
        a.tmax_c,
        a.status AS holzworth_status,
        mixing_height_m(a.status, a.height_agl_m) AS holzworth_m
    FROM afternoon_mixing a
    JOIN snd m ON m.station_id = a.station_id AND m.launch_time = a.morning_launch_time
    WHERE analysed(m.analysis_status) AND m.season_year BETWEEN $2 AND $3
),
afternoon AS (
    SELECT station_id, local_day, mixing_height_consensus_status AS status,
        mixing_height_m(mixing_height_consensus_status, mixing_height_consensus_m) AS height_m
    FROM snd
    WHERE analysed(analysis_status) AND lmst_h >= 12 AND lmst_h < 20
    QUALIFY row_number() OVER (PARTITION BY station_id, local_day ORDER BY abs(lmst_h - 15), launch_time) = 1
),
labelled AS (
    SELECT morning.*,
        CASE
            WHEN sbi_rank = 0 THEN 'none'
            WHEN sbi_rank = 1 THEN '<' || format('{:g}', $4[1]) || ' K'
            WHEN sbi_rank = len($4::DOUBLE[]) + 1 THEN '>=' || format('{:g}', $4[sbi_rank - 1]) || ' K'
            ELSE format('{:g}', $4[sbi_rank - 1]) || '-' || format('{:g}', $4[sbi_rank]) || ' K'
        END AS sbi_class
    FROM morning
)
SELECT station_id, season, season_name, season_year, local_day, sbi_rank, sbi_class, tmax_c,
    'holzworth' AS source, holzworth_status AS status, holzworth_m AS height_m
FROM labelled
UNION ALL
SELECT l.station_id, l.season, l.season_name, l.season_year, l.local_day, l.sbi_rank, l.sbi_class, l.tmax_c,
    'later_sounding', coalesce(a.status, 'no_sounding'), a.height_m
FROM labelled l
LEFT JOIN afternoon a USING (station_id, local_day)
