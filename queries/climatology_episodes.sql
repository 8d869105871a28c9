-- Climatology of episodes (AttachEpisodes must have built days, episodes and
-- episode_days): one row per station × criterion × period.
-- Parameters: $1 period ('season' or 'month'), $2 station ids (empty list:
-- all), $3 first year, $4 last year (season mode: the season's year, December
-- counting with the following DJF; month mode: the calendar year), $5 the
-- criterion names, in order, $6 their definitions (analyze.Criterion.Definition,
-- the rule column: what rule made the row).
-- An episode is counted in the period of its first day; a day inside an
-- episode (days_in_episodes, share_of_days) in its own period. share_of_days
-- is days meeting the rule inside episodes over the days with an analysable
-- sounding. n_days_judged counts the days on which the rule could be judged
-- (rule_months: met or failed); where it is 0 (e.g. a station without a
-- morning sounding and a rule that needs one) the episode counts are null,
-- not 0: no episodes could have been found. Lengths are calendar days (missing days inside included);
-- percentiles are Hyndman-Fan type 7.
WITH d AS (
    SELECT station_id, local_date,
           CASE WHEN $1 = 'month' THEN NULL ELSE season END AS season,
           CASE WHEN $1 = 'month' THEN month ELSE NULL END AS month,
           CASE WHEN $1 = 'month' THEN year ELSE season_year END AS y
    FROM days
    WHERE len($2::VARCHAR[]) = 0 OR list_contains($2::VARCHAR[], station_id)
), dk AS (
    SELECT * FROM d WHERE y BETWEEN $3 AND $4
), crit AS (
    SELECT c.criterion, c.rule, c.ord FROM (SELECT unnest($5::VARCHAR[]) AS criterion, unnest($6::VARCHAR[]) AS rule,
        generate_subscripts($5::VARCHAR[], 1) AS ord) c
), cells AS (
    SELECT station_id, season, month, count(*) AS n_days, count(DISTINCT y) AS n_years
    FROM dk GROUP BY ALL
), met AS (
    SELECT ed.station_id, ed.criterion, dk.season, dk.month, count(*) AS days_in_episodes
    FROM episode_days ed JOIN dk USING (station_id, local_date)
    WHERE day_met(ed.status)
    GROUP BY ALL
), judged AS (
    SELECT station_id, criterion,
           CASE WHEN $1 = 'month' THEN NULL ELSE season END AS season,
           CASE WHEN $1 = 'month' THEN month ELSE NULL END AS month,
           sum(days_met + days_failed) AS n_judged
    FROM rule_months
    WHERE (len($2::VARCHAR[]) = 0 OR list_contains($2::VARCHAR[], station_id))
      AND (CASE WHEN $1 = 'month' THEN year ELSE season_year END) BETWEEN $3 AND $4
    GROUP BY ALL
), ep AS (
    SELECT station_id, criterion,
           CASE WHEN $1 = 'month' THEN NULL ELSE season END AS season,
           CASE WHEN $1 = 'month' THEN month ELSE NULL END AS month,
           count(*) AS n_episodes,
           quantile_cont(length_days, [0.5, 0.9]) AS q,
           max(length_days) AS longest,
           sum(days_missing) AS days_missing,
           count(*) FILTER (WHERE open_start OR open_end) AS n_open
    FROM episodes
    WHERE (len($2::VARCHAR[]) = 0 OR list_contains($2::VARCHAR[], station_id))
      AND (CASE WHEN $1 = 'month' THEN year ELSE season_year END) BETWEEN $3 AND $4
    GROUP BY ALL
)
SELECT c.station_id, k.criterion, c.season, c.month, c.n_years, c.n_days,
       coalesce(j.n_judged, 0) AS n_days_judged,
       CASE WHEN coalesce(j.n_judged, 0) > 0 THEN coalesce(ep.n_episodes, 0) END AS n_episodes,
       CASE WHEN coalesce(j.n_judged, 0) > 0 THEN round(coalesce(ep.n_episodes, 0) / c.n_years, 3) END AS episodes_per_year,
       CASE WHEN coalesce(j.n_judged, 0) > 0 THEN coalesce(met.days_in_episodes, 0) END AS days_in_episodes,
       CASE WHEN coalesce(j.n_judged, 0) > 0 THEN round(coalesce(met.days_in_episodes, 0) / c.n_days, 4) END AS share_of_days,
       ep.q[1] AS length_median_days,
       ep.q[2] AS length_p90_days,
       ep.longest AS longest_days,
       coalesce(ep.days_missing, 0) AS days_missing,
       coalesce(ep.n_open, 0) AS n_open_ended,
       k.rule
FROM cells c
CROSS JOIN crit k
LEFT JOIN ep ON ep.station_id = c.station_id AND ep.criterion = k.criterion
    AND ep.season IS NOT DISTINCT FROM c.season AND ep.month IS NOT DISTINCT FROM c.month
LEFT JOIN judged j ON j.station_id = c.station_id AND j.criterion = k.criterion
    AND j.season IS NOT DISTINCT FROM c.season AND j.month IS NOT DISTINCT FROM c.month
LEFT JOIN met ON met.station_id = c.station_id AND met.criterion = k.criterion
    AND met.season IS NOT DISTINCT FROM c.season AND met.month IS NOT DISTINCT FROM c.month
ORDER BY c.station_id, k.ord,
         CASE c.season WHEN 'DJF' THEN 1 WHEN 'MAM' THEN 2 WHEN 'JJA' THEN 3 WHEN 'SON' THEN 4 END, c.month
