-- Probability that a morning surface-based inversion (SBI) persists through
-- the day, by station, season and morning SBI strength class.
--
-- Source: the days table (AttachEpisodes): the morning sounding's SBI and
-- whether an SBI is still present on the same local day's afternoon/evening
-- sounding (sbi_persists). Caution: where the evening launch is after sunset
-- (00 UTC in the Americas in winter), a "persisting" SBI may be a new
-- nocturnal one; the afternoon mixing height columns are the other half of
-- the evidence.
-- Parameters: $1 VARCHAR[] stations (empty: all), $2 first and $3 last
-- season_year, $4 DOUBLE[] ascending SBI strength class limits in K, $5
-- minimum days below which a row is noted.
--
-- Columns: station_id, season, sbi_class, n_days (days with a morning SBI
-- in the class and an afternoon/evening sounding), n_persists (an SBI on
-- the afternoon/evening sounding too), p_persists = n_persists / n_days,
-- afternoon_mh_p50_m (median afternoon mixing height of those days, m above
-- ground), n_in_episode (days inside a persistent_inversion_whiteman2001
-- episode), note.
WITH d AS (
    SELECT d.*,
        len(list_filter($4::DOUBLE[], l -> l <= d.morning_sbi_strength_k)) AS k
    FROM days d
    WHERE d.morning_sbi AND d.sbi_persists IS NOT NULL
      AND (len($1::VARCHAR[]) = 0 OR list_contains($1::VARCHAR[], d.station_id))
      AND d.season_year BETWEEN $2 AND $3
), labelled AS (
    SELECT d.*,
        CASE
            WHEN k = 0 THEN '<' || format('{:g}', $4[1]) || ' K'
            WHEN k = len($4::DOUBLE[]) THEN '>=' || format('{:g}', $4[k]) || ' K'
            ELSE format('{:g}', $4[k]) || '-' || format('{:g}', $4[k + 1]) || ' K'
        END AS sbi_class
    FROM d
), ep AS (
    SELECT station_id, local_date, true AS in_episode
    FROM episode_days
    WHERE criterion = 'persistent_inversion_whiteman2001' AND day_met(status)
)
SELECT l.station_id, l.season, l.sbi_class,
    count(*) AS n_days,
    count(*) FILTER (WHERE l.sbi_persists) AS n_persists,
    round(count(*) FILTER (WHERE l.sbi_persists)::DOUBLE / count(*), 3) AS p_persists,
    quantile_cont(l.afternoon_mixing_height_m, 0.5) AS afternoon_mh_p50_m,
    count(ep.in_episode) AS n_in_episode,
    CASE WHEN count(*) < $5 THEN 'n<' || $5 ELSE '' END AS note
FROM labelled l
LEFT JOIN ep USING (station_id, local_date)
GROUP BY l.station_id, l.season, l.sbi_class, l.k
ORDER BY l.station_id, season_rank(l.season), l.k
