-- Mixing-height methods present in the mixing_heights view, sorted.
-- Parameters: none.
SELECT DISTINCT method FROM mixing_heights ORDER BY method
