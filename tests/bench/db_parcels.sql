-- tests/bench/db_bench.sh: 10 million invented delivery legs of a parcel
-- carrier (seeded), made by the server itself.  ROWS is set by psql -v.
DROP TABLE IF EXISTS parcel_legs;
SELECT setseed(0.42) \gset
CREATE UNLOGGED TABLE parcel_legs AS
SELECT i AS leg_id,
       'C' || lpad((i * 7919 % 200000)::text, 6, '0') AS customer_id,
       TIMESTAMP '2025-01-01' + (i % 525600) * INTERVAL '1 minute' AS scanned_at,
       CASE WHEN i % 5 = 0 THEN 'test' ELSE 'train' END AS fold,
       (stops > 15 AND r7 < 0.7) OR r7 < 0.1 AS late,
       round((0.1 + r1 * 30)::numeric, 2)::float8 AS weight_kg,
       r2 * 500 AS distance_km,
       (ARRAY['standard', 'express', 'economy', 'same_day', 'freight'])[1 + i % 5] AS service,
       'D' || lpad((i * 31 % 40)::text, 2, '0') AS depot,
       (18 + (i * 13 % 60) / 10 * 10)::int AS sender_age_band,
       stops,
       TIMESTAMP '2025-01-01' + (i % 525600) * INTERVAL '1 minute' + (r4 * 50 - 48) * INTERVAL '1 hour' AS promised_at,
       CASE WHEN r5 < 0.05 THEN NULL ELSE r5 < 0.3 END AS fragile,
       CASE WHEN ((stops > 15 AND r7 < 0.7) OR r7 < 0.1) AND r6 < 0.5 THEN NULL
            ELSE round((r6 * 500)::numeric, 2) END AS declared_value
FROM (SELECT i, random() AS r1, random() AS r2, (random() * 20)::int AS stops, random() AS r4,
             random() AS r5, random() AS r6, random() AS r7
      FROM generate_series(1::bigint, :rows) AS i) AS s;
ANALYZE parcel_legs;
GRANT SELECT ON parcel_legs TO knowable_reader;
