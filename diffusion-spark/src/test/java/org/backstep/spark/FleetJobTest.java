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

/** The example job end to end: fit on a CSV file, score it, read the Parquet result. */
class FleetJobTest {

    @Test
    void fitsOnCsvAndWritesScoresAsParquet(@TempDir Path dir) throws Exception {
        Table t = TestModels.readings(120, 51);
        List<String> lines = new ArrayList<>();
        lines.add(TestModels.KEY + "," + String.join(",", TestModels.NAMES));
        for (int i = 0; i < t.rows(); i++) {
            StringBuilder b = new StringBuilder().append(1000 + i);
            for (int j = 0; j < t.columns(); j++) {
                b.append(',').append(j == 4 ? String.valueOf((int) t.get(i, j)) : String.valueOf(t.get(i, j)));
            }
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
            "--binary", "door_open", "--steps", "10", "--hidden", "8,8", "--epochs", "5", "--screen", "0.9"}, err));
        assertEquals(0, FleetJob.run(spark, new String[] {"apply", model, csv.toString(), out, "--score-draws", "2"}, err));
        Dataset<Row> scores = spark.read().parquet(out);
        assertEquals(t.rows(), scores.count());
        for (Row r : scores.select("backstep_nats", "backstep_flag").collectAsList()) {
            assertTrue(Double.isFinite(r.getDouble(0)));
        }
        assertEquals("", errors.toString(java.nio.charset.StandardCharsets.UTF_8));
        assertEquals(2, FleetJob.run(spark, new String[] {"apply", model, csv.toString(), out + "2", "--job", "paint"}, err));
        assertTrue(errors.toString(java.nio.charset.StandardCharsets.UTF_8).contains("--job is 'paint'"));
    }
}
