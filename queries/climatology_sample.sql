-- The sample of the climatology: the soundings a climatology run looks
-- at, with the keys of its cells. This text opens a WITH clause whose last
-- member is `sample`; Go puts it in front of climatology_cells.sql,
-- climatology_methods.sql and climatology_categories.sql, which continue
-- the clause (", a AS (...)") and end it with their SELECT.
--
-- Source: the soundings view.
-- Parameters (bound, never pasted):
--   $1  'season' or 'month': the period of a cell
--   $2  'hour' or 'sun': the time of day of a cell (nominal hour UTC, or
--       the sun class day/low_sun/civil_twilight/night/unknown at launch)
--   $3  VARCHAR[] station ids to keep; an empty list keeps every station
--   $4  first year kept, $5 last year kept (inclusive): season_year when
--       $1 = 'season' (December counts with the following year's DJF,
--       METHODS §8), the calendar year of the nominal time when 'month'
--   $6  'pooled' or 'all': with 'pooled', a sounding at one of the
--       station's special hours (an hour holding less than 10 % of the
--       station's soundings) joins the nearest regular hour within 3 h,
--       or the "other" cell (nominal_hour null) when none is that near;
--       with 'all' every nominal hour is its own cell (common practice,
--       no source: the 10 % and 3 h are this program's choice)
--
-- Columns: the cell keys station_id, season (DJF/MAM/JJA/SON, null in month
-- mode), month (1-12, null in season mode), nominal_hour (null in sun mode,
-- and for the "other" cell), sun_class (null in hour mode); then per
-- sounding: latitude_deg (null where unknown: the statements name a
-- station's seasons by the mean of its soundings' latitudes, the
-- season_name macro), hour_given (the sounding's own nominal hour),
-- calendar_month, launch_time, valid (analysed(analysis_status)) and the
-- per-sounding values the statistics use.
--
-- Cost (600 station-years of the bench archive, 438,400 soundings): the
-- statement reads the soundings files once, only the columns the sample
-- uses, into `raw` (materialized: `hours` and `sample` both read it).
-- Opening the 600 files is a good part of a read (about 0.13 s of CPU
-- even for no column), so `hours` counts from `raw` instead of reading
-- the files a second time for its two columns (0.76-0.84 s of CPU before,
-- 0.61-0.71 s after for the cells statement on warm footers), and the
-- season names take the mean latitude from the per-cell sums in each
-- statement, not from an aggregate over the sample joined back to it.
-- `raw` holds the soundings of the stations kept, every year of them
-- (about 90 MB more peak memory than before for these 438,400: 330-338
-- MB -> 424-426 MB for the summary).
WITH raw AS MATERIALIZED (
    SELECT s.station_id, s.season, s.month, s.nominal_hour, s.sun_class, s.latitude_deg,
        s.launch_time, s.analysis_status, s.mixing_height_consensus_status, s.mixing_height_consensus_m,
        s.sbi_present, s.sbi_strength_k, s.sbi_top_agl_m, s.ei_class, s.mixed_layer_levels,
        s.mixed_layer_top_agl_m, s.mixed_layer_base_agl_m, s.mixed_layer_theta_k, s.mixed_layer_mixing_ratio_gkg,
        s.transport_wind_ms, s.ventilation_index_m2s, s.ventilation_category, s.ventilation_table,
        (CASE WHEN $1 = 'season' THEN s.season_year ELSE s.year END) BETWEEN $4 AND $5 AS kept
    FROM soundings s
    -- a station's hours need only its own soundings, so the stations left
    -- out are dropped here, which bounds what `raw` holds in memory
    WHERE len($3::VARCHAR[]) = 0 OR list_contains($3::VARCHAR[], s.station_id)
),
hours AS MATERIALIZED (
    -- over the station's whole record, whatever the years kept
    SELECT station_id, nominal_hour AS hour,
        count(*)::DOUBLE / sum(count(*)) OVER (PARTITION BY station_id) AS share
    FROM raw
    GROUP BY station_id, nominal_hour
),
pool AS (
    SELECT h.station_id, h.hour,
        arg_min(r.hour, least(abs(r.hour - h.hour), 24 - abs(r.hour - h.hour)) * 100 + r.hour) AS pooled
    FROM hours h
    LEFT JOIN hours r ON r.station_id = h.station_id AND r.share >= 0.1
        AND least(abs(r.hour - h.hour), 24 - abs(r.hour - h.hour)) <= 3
    GROUP BY h.station_id, h.hour
),
sample AS (
    SELECT
        s.station_id,
        CASE WHEN $1 = 'season' THEN s.season END AS season,
        CASE WHEN $1 = 'month' THEN s.month END AS month,
        CASE WHEN $2 = 'hour' THEN (CASE WHEN $6 = 'all' THEN s.nominal_hour ELSE p.pooled END) END AS nominal_hour,
        CASE WHEN $2 = 'sun' THEN s.sun_class END AS sun_class,
        nullif(s.latitude_deg, 'NaN'::DOUBLE) AS latitude_deg,
        s.nominal_hour AS hour_given,
        s.month AS calendar_month,
        s.launch_time,
        analysed(s.analysis_status) AS valid,
        s.mixing_height_consensus_status AS consensus_status,
        mixing_height_m(s.mixing_height_consensus_status, s.mixing_height_consensus_m) AS consensus_m,
        s.sbi_present,
        s.sbi_strength_k,
        s.sbi_top_agl_m,
        s.ei_class,
        s.mixed_layer_levels > 0 AS ml_present,
        s.mixed_layer_top_agl_m - s.mixed_layer_base_agl_m AS ml_depth_m,
        s.mixed_layer_theta_k,
        s.mixed_layer_mixing_ratio_gkg,
        s.transport_wind_ms,
        s.ventilation_index_m2s,
        s.ventilation_category,
        s.ventilation_table
    FROM raw s
    LEFT JOIN pool p ON p.station_id = s.station_id AND p.hour = s.nominal_hour
    WHERE s.kept
)
