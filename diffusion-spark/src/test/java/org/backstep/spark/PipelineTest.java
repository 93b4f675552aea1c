package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.stream.Stream;

import org.apache.spark.ml.Pipeline;
import org.apache.spark.ml.PipelineModel;
import org.apache.spark.ml.PipelineStage;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.backstep.DiffusionModel;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The estimator inside a Spark ML Pipeline: fitted, saved, loaded and applied. */
class PipelineTest {

    private static BackstepEstimator smallEstimator() {
        return new BackstepEstimator().setSteps(10).setHidden(8, 8).setEpochs(10).setSampleRows(150)
                .setRowKeyCol(TestModels.KEY).setSeed(5).setScoreDraws(3);
    }

    private static double[] scores(Dataset<Row> scored) {
        return scored.orderBy(TestModels.KEY).select("backstep_nats").collectAsList().stream()
                .mapToDouble(r -> r.getDouble(0)).toArray();
    }

    @Test
    void aFittedPipelineSavedAndLoadedGivesTheSameColumns(@TempDir Path dir) throws Exception {
        Dataset<Row> train = TestModels.frame(TestModels.readings(300, 21), 3);
        Dataset<Row> fresh = TestModels.frame(TestModels.readings(25, 22), 2);
        PipelineModel fitted = new Pipeline().setStages(new PipelineStage[] {smallEstimator().setScreenQuantile(0.9)})
                .fit(train);
        Dataset<Row> before = fitted.transform(fresh);
        String saved = dir.resolve("pipeline").toString();
        fitted.write().overwrite().save(saved);
        PipelineModel loaded = PipelineModel.load(saved);
        Dataset<Row> after = loaded.transform(fresh);

        assertEquals(List.of(before.columns()), List.of(after.columns()));
        assertTrue(List.of(after.columns()).containsAll(List.of("backstep_nats", "backstep_flag")));
        // same rows, same model file, same row seeds: the same bits (common practice, no source)
        assertArrayEquals(scores(before), scores(after), 0.0);
        assertEquals(before.orderBy(TestModels.KEY).select("backstep_flag").collectAsList(),
                after.orderBy(TestModels.KEY).select("backstep_flag").collectAsList());

        BackstepModel stage = (BackstepModel) loaded.stages()[0];
        double threshold = (Double) stage.getOrDefault(stage.threshold());
        assertTrue(Double.isFinite(threshold), "threshold " + threshold);
        Path file;
        try (Stream<Path> files = Files.walk(dir)) {
            file = files.filter(p -> p.getFileName().toString().equals(BackstepModel.MODEL_FILE)).findFirst().orElseThrow();
        }
        // the Backstep model file inside the saved folder is the fitted one, byte for byte, and loads in the core
        assertEquals(((BackstepModel) fitted.stages()[0]).modelSha256(), BackstepModel.sha256(Files.readAllBytes(file)));
        assertEquals(TestModels.NAMES, DiffusionModel.load(file).transform().names());
    }

    @Test
    void theUnfittedEstimatorSavesAndLoadsItsParams(@TempDir Path dir) throws Exception {
        BackstepEstimator est = smallEstimator().setBinaryCols().setScreenQuantile(0.95);
        String saved = dir.resolve("estimator").toString();
        est.write().overwrite().save(saved);
        BackstepEstimator back = BackstepEstimator.read().load(saved);
        assertEquals(est.uid(), back.uid());
        assertEquals(150, (int) (Integer) back.getOrDefault(back.sampleRows()));
        assertEquals(0.95, (Double) back.getOrDefault(back.screenQuantile()), 0.0);
        assertArrayEquals(new int[] {8, 8}, back.getOrDefault(back.hidden()));
        assertEquals(TestModels.KEY, back.getOrDefault(back.rowKeyCol()));
    }

    @Test
    void fittingDoesNotDependOnPartitioningAndKeepsTheSampleCap() {
        Table rows = TestModels.readings(400, 23);
        Dataset<Row> fresh = TestModels.frame(TestModels.readings(15, 24), 1);
        BackstepModel one = smallEstimator().setSampleRows(120).fit(TestModels.frame(rows, 1));
        BackstepModel five = smallEstimator().setSampleRows(120).fit(TestModels.frame(rows, 5));
        // rows are sampled by their own key and ordered by it, so the training table is the same
        assertArrayEquals(scores(one.transform(fresh)), scores(five.transform(fresh)), 0.0);
        assertEquals(120, one.model().provenance().tableRows());
        assertEquals(one.model().provenance().tableSha256(), five.model().provenance().tableSha256());
        assertEquals(List.of("supply_air", "return_air", "ambient", "power_kw", "door_open"),
                one.model().transform().names());
    }
}
