-- Cell summaries for block `recipes` (crisp ~ oven + recipe + oven:recipe), printed by `sheaf sql`.
-- sheaf-query: block=recipes scale=2 origin=3.5 parquet=spark:/lake/trials
--
-- One row per cell: n, and the sums of y - origin and of (y - origin)^2 as
-- exact decimals, with the same decimal origin on every row. Save the result
-- as CSV with a header row and the column names as they are, and read it
-- with `input: summary`.
-- Dialect: only the FROM clause (a Parquet path) is the engine's own;
-- every other line runs unchanged on DuckDB, Apache DataFusion and
-- Apache Spark SQL, in the part of SQL they share: names in backticks,
-- text in single quotes, CAST to STRING, DOUBLE and DECIMAL(p, s), WITH,
-- CROSS JOIN, CASE, TRIM, COALESCE, COUNT, SUM and MIN.
-- Exactness: the response is cast to DECIMAL(17, 2) (values below 1e15)
-- and stays decimal. `rounded` counts values that had more than 2
-- digits after the point (sheaf refuses a count above 0). A value the cast
-- cannot hold, or a sum past DECIMAL(38, 4), makes `sum` or `squares`
-- empty (null), which sheaf refuses: never a wrong number.
-- Missing values must be NULL in the table; rows with a NULL response or
-- factor, or an empty factor, are left out, as sheaf leaves them out.
WITH kept AS (
  SELECT
    TRIM(CAST(t.`oven` AS STRING)) AS f0,
    TRIM(CAST(t.`recipe` AS STRING)) AS f1,
    CAST(t.`crisp` AS DECIMAL(17, 2)) AS y,
    CAST(t.`crisp` AS DOUBLE) AS y_read
  FROM parquet.`/lake/trials` AS t
  WHERE t.`crisp` IS NOT NULL
    AND t.`oven` IS NOT NULL
    AND TRIM(CAST(t.`oven` AS STRING)) <> ''
    AND t.`recipe` IS NOT NULL
    AND TRIM(CAST(t.`recipe` AS STRING)) <> ''
    AND CAST(t.`moisture` AS DOUBLE) <= 4.5
),
low AS (
  SELECT CAST('3.5' AS DECIMAL(17, 2)) AS origin
),
shifted AS (
  SELECT
    k.f0 AS f0,
    k.f1 AS f1,
    l.origin AS origin,
    k.y - l.origin AS d,
    CAST(k.y - l.origin AS DOUBLE) AS d_float,
    CASE WHEN CAST(k.y AS DOUBLE) = k.y_read THEN 0 ELSE 1 END AS changed
  FROM kept AS k
  CROSS JOIN low AS l
)
SELECT
  f0 AS `oven`,
  f1 AS `recipe`,
  COUNT(*) AS `n`,
  origin AS `origin`,
  CASE WHEN COUNT(d) = COUNT(*)
    THEN CAST(SUM(d) AS DECIMAL(38, 2)) END AS `sum`,
  CASE WHEN COUNT(d) = COUNT(*) AND SUM(d_float * d_float) < 9e33
    THEN CAST(SUM(CAST(d AS DECIMAL(19, 2)) * CAST(d AS DECIMAL(18, 2)))
      AS DECIMAL(38, 4)) END AS `squares`,
  SUM(changed) AS `rounded`
FROM shifted
GROUP BY f0, f1, origin
ORDER BY f0, f1
