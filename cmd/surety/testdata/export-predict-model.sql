-- A weighted majority vote trained by Surety, as one SQL:2003 SELECT.
-- Certificate: With probability at least 95% over the draw of these rows, the error rate of this vote on new rows from the same source is at most 10%.
-- Delta: 0.05
-- Model file: sha256 e4f5912b61f54c418e4fa6e1d165f04173f97e9210a4265f5811dbc0a3a5b915
-- Label column: approved
-- Reads table "loans", columns:
--   "income" numeric
--   "region" categorical
-- Missing values are NULL (or NaN in a numeric column). Categories compare as exact text.
-- Returns "class" (the predicted class), "margin" (its total weight minus the runner-up's; 0 is a tie, which goes to the first class listed), "weight_<class>" (each class's total weight).
-- Classes, in order: 'no', 'yes, surely'
SELECT
  k0 AS "id",
  CASE WHEN d >= 0 THEN 'no' ELSE 'yes, surely' END AS "class",
  CASE WHEN d >= 0 THEN d ELSE -d END AS "margin",
  t0 AS "weight_no",
  t1 AS "weight_yes, surely"
FROM (
  SELECT
    k0,
    t0,
    t1,
    t0 - t1 AS d
  FROM (
    SELECT
      x0,
      x1,
      k0,
      0 + CASE WHEN x0 > CAST(5.23e+04 AS DOUBLE PRECISION) AND (x0 <= CAST(1.7976931348623157e+308 AS DOUBLE PRECISION) OR -x0 < x0) THEN 0 ELSE CAST(4.5e-01 AS DOUBLE PRECISION) END + CASE WHEN x1 = 'north' THEN 0 ELSE CAST(3.5e-01 AS DOUBLE PRECISION) END + CASE WHEN x1 <> 'south' THEN 0 ELSE CAST(2e-01 AS DOUBLE PRECISION) END AS t0,
      0 + CASE WHEN x0 > CAST(5.23e+04 AS DOUBLE PRECISION) AND (x0 <= CAST(1.7976931348623157e+308 AS DOUBLE PRECISION) OR -x0 < x0) THEN CAST(4.5e-01 AS DOUBLE PRECISION) ELSE 0 END + CASE WHEN x1 = 'north' THEN CAST(3.5e-01 AS DOUBLE PRECISION) ELSE 0 END + CASE WHEN x1 <> 'south' THEN CAST(2e-01 AS DOUBLE PRECISION) ELSE 0 END AS t1
    FROM (
      SELECT
        CAST("income" AS DOUBLE PRECISION) AS x0,
        "region" AS x1,
        "id" AS k0
      FROM "loans"
    ) AS q1
  ) AS q2
) AS q3
;
