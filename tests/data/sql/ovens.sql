-- Cell summaries for block `ovens` (crisp ~ oven), printed by `sheaf sql`.
-- sheaf-query: block=ovens scale=1 origin=min table=bakery.trials
--
-- One row per cell: n, and the sums of y - origin and of (y - origin)^2 as
-- exact decimals, with the same decimal origin on every row. Save the result
-- as CSV with a header row and the column names as they are, and read it
-- with `input: summary`.
-- Dialect: every line runs unchanged on DuckDB, Apache DataFusion and
-- Apache Spark SQL, in the part of SQL they share: names in backticks,
-- text in single quotes, CAST to STRING, DOUBLE and DECIMAL(p, s), WITH,
-- CROSS JOIN, CASE, TRIM, COALESCE, COUNT, SUM and MIN.
-- Exactness: the response is cast to DECIMAL(17, 1) (values below 1e16)
-- and stays decimal. `rounded` counts values that had more than 1
-- digits after the point (sheaf refuses a count above 0). A value the cast
-- cannot hold, or a sum past DECIMAL(38, 2), makes `sum` or `squares`
-- empty (null), which sheaf refuses: never a wrong number.
-- Missing values must be NULL in the table; rows with a NULL response or
-- factor, or an empty factor, are left out, as sheaf leaves them out.
WITH kept AS (
  SELECT
    TRIM(CAST(t.`oven` AS STRING)) AS f0,
    CAST(t.`crisp` AS DECIMAL(17, 1)) AS y,
    CAST(t.`crisp` AS DOUBLE) AS y_read
  FROM bakery.trials AS t
  WHERE t.`crisp` IS NOT NULL
    AND t.`oven` IS NOT NULL
    AND TRIM(CAST(t.`oven` AS STRING)) <> ''
    AND COALESCE(TRIM(CAST(t.`batch` AS STRING)), '') <> 'trial'
),
low AS (
  SELECT MIN(y) AS origin FROM kept
),
shifted AS (
  SELECT
    k.f0 AS f0,
    l.origin AS origin,
    k.y - l.origin AS d,
    CAST(k.y - l.origin AS DOUBLE) AS d_float,
    CASE WHEN CAST(k.y AS DOUBLE) = k.y_read THEN 0 ELSE 1 END AS changed
  FROM kept AS k
  CROSS JOIN low AS l
)
SELECT
  f0 AS `oven`,
  COUNT(*) AS `n`,
  origin AS `origin`,
  CASE WHEN COUNT(d) = COUNT(*)
    THEN CAST(SUM(d) AS DECIMAL(38, 1)) END AS `sum`,
  CASE WHEN COUNT(d) = COUNT(*) AND SUM(d_float * d_float) < 9e35
    THEN CAST(SUM(CAST(d AS DECIMAL(19, 1)) * CAST(d AS DECIMAL(18, 1)))
      AS DECIMAL(38, 2)) END AS `squares`,
  SUM(changed) AS `rounded`
FROM shifted
GROUP BY f0, origin
ORDER BY f0
