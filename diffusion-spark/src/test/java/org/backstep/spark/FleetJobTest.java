package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.backstep.spark.example.FleetJob;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The example job end to end: fit on a CSV file with an integer and a categorical column, score it
 * and a Parquet copy of it, read the Parquet results.
 */
class FleetJobTest {

    @Test
    void fitsOnCsvAndWritesScoresAsParquet(@TempDir Path dir) throws Exception {
        Table t = TestModels.readings(120, 51);
        List<String> lines = new ArrayList<>();
        lines.add(TestModels.KEY + "," + String.join(",", TestModels.NAMES) + ",door_openings,alarm_code");
        String[] codes = {"OK", "E1", "R2"};
        for (int i = 0; i < t.rows(); i++) {
            StringBuilder b = new StringBuilder().append(1000 + i);
            for (int j = 0; j < t.columns(); j++) {
                b.append(',').append(j == 4 ? String.valueOf((int) t.get(i, j)) : String.valueOf(t.get(i, j)));
            }
            b.append(',').append(i % 7 + (int) t.get(i, 4)).append(',').append(codes[i % 3]);   // invented
            lines.add(b.toString());
        }
        Path csv = dir.resolve("readings.csv");
        Files.write(csv, lines);
        String model = dir.resolve("model").toString();
        String out = dir.resolve("scores").toString();
        var spark = LocalSpark.session();
        var errors = new java.io.ByteArrayOutputStream();
        var err = new java.io.PrintStream(errors, true, java.nio.charset.StandardCharsets.UTF_8);
        assertEquals(0, FleetJob.run(spark, new String[] {"fit", csv.toString(), model, "--key", TestModels.KEY,
            "--binary", "door_open", "--integer", "door_openings", "--categorical", "alarm_code", "--steps", "10", "--hidden", "8,8", "--epochs", "5", "--screen", "0.9"}, err));
        assertEquals(0, FleetJob.run(spark, new String[] {"apply", model, csv.toString(), out, "--score-draws", "2"}, err));
        Dataset<Row> scores = spark.read().parquet(out);
        assertEquals(t.rows(), scores.count());
        for (Row r : scores.select("backstep_nats", "backstep_flag").collectAsList()) {
            assertTrue(Double.isFinite(r.getDouble(0)));
        }
        var kinds = org.backstep.spark.BackstepModel.read().load(model).model().transform().kinds();
        assertEquals(List.of("CONTINUOUS", "CONTINUOUS", "CONTINUOUS", "CONTINUOUS", "BINARY", "INTEGER", "CATEGORICAL"),
                kinds.stream().map(Enum::name).toList());
        // the same rows from Parquet give the same scores (to the float network's rounding by place in a batch)
        String parquet = dir.resolve("readings.parquet").toString();
        spark.read().option("header", "true").option("inferSchema", "true").csv(csv.toString()).write().parquet(parquet);
        assertEquals(0, FleetJob.run(spark, new String[] {"apply", model, parquet, out + "-p", "--score-draws", "2"}, err));
        List<Row> a = scores.orderBy(TestModels.KEY).select("backstep_nats").collectAsList();
        List<Row> b = spark.read().parquet(out + "-p").orderBy(TestModels.KEY).select("backstep_nats").collectAsList();
        for (int i = 0; i < a.size(); i++) {
            assertEquals(a.get(i).getDouble(0), b.get(i).getDouble(0), JobsTest.tolerance(a.get(i).getDouble(0)), "row " + i);
        }
        assertEquals("", errors.toString(java.nio.charset.StandardCharsets.UTF_8));
        assertEquals(2, FleetJob.run(spark, new String[] {"apply", model, csv.toString(), out + "2", "--job", "paint"}, err));
        assertTrue(errors.toString(java.nio.charset.StandardCharsets.UTF_8).contains("--job is 'paint'"));
    }
}
