-- Strengths of surface-based inversions, by season.
--
-- Source: the soundings view. Parameters: $1 station_id ('' for every
-- station).
-- One row per valid sounding (analysed(analysis_status)) with a surface-based
-- inversion and a known strength: season (DJF, MAM, JJA, SON) and
-- sbi_strength_k (K, temperature at the top minus at the base).
SELECT station_id, season, sbi_strength_k
FROM soundings
WHERE ($1 = '' OR station_id = $1) AND analysed(analysis_status) AND sbi_present
    AND sbi_strength_k IS NOT NULL AND NOT isnan(sbi_strength_k)
ORDER BY station_id, season, sbi_strength_k
