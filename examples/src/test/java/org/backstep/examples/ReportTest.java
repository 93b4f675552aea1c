package org.backstep.examples;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.junit.jupiter.api.Test;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

/** The report's own judgements, on made-up figures: its cautions, and the provenance without the history. */
class ReportTest {

    private static final ObjectMapper JSON = new ObjectMapper();

    @Test
    void cautionsWhenTheMixtureBeatsTheModel() {
        ObjectNode bound = bound(-1.0, 2.0, -1.5);
        List<String> c = Report.cautions(bound, JSON.createObjectNode(), imputation(0.80, 0.81), denoising(1.0, 0.6), samples(0.4, 0.0));
        assertEquals(1, c.size(), c.toString());
        assertTrue(c.get(0).contains("A simpler model fits better") && c.get(0).contains("the Gaussian mixture scores lower"), c.get(0));
    }

    @Test
    void noCautionWhenTheModelBeatsBothBaselinesAndEveryFigureIsFair() {
        List<String> c = Report.cautions(bound(-2.0, 2.0, -1.5), JSON.createObjectNode(), imputation(0.80, 0.81),
                denoising(1.0, 0.6), samples(0.4, 0.01));
        assertTrue(c.isEmpty(), c.toString());
    }

    @Test
    void cautionsForWeakFigures() {
        ObjectNode anomalies = JSON.createObjectNode().put("injectedFaultRows", 20).put("recall", 0.1).put("quantile", 0.99);
        List<String> c = Report.cautions(bound(-2.0, 2.0, -1.5), anomalies, imputation(0.60, 0.81), denoising(1.0, 1.1),
                samples(0.01, 0.2));
        // the screen, the intervals, the denoising, the energy test, the memorization share
        assertEquals(5, c.size(), c.toString());
        // a table without a continuous column denoises no reading: no caution that denoising did not help
        // (common practice, no source)
        ObjectNode none = denoising(0.0, 0.0).put("cells", 0);
        assertEquals(4, Report.cautions(bound(-2.0, 2.0, -1.5), anomalies, imputation(0.60, 0.81), none, samples(0.01, 0.2))
                .size());
    }

    @Test
    void provenanceLeavesOutTheHistoryRows() {
        String describe = String.join("\n", "DiffusionModel[...]", "  note: something", "  history (epoch, loss, bound, seconds):",
                "        1     7.6655            -      1.0", "        2     3.1000       -3.7      1.1");
        String shown = Report.withoutHistory(describe);
        assertTrue(shown.contains("note: something") && shown.contains("history: see"), shown);
        assertFalse(shown.contains("7.6655"), shown);
    }

    private static ObjectNode bound(double model, double gauss, double mixture) {
        return JSON.createObjectNode().put("natsPerRecordModelSpace", model).put("oneGaussianNats", gauss).put("mixtureNats", mixture);
    }

    private static ObjectNode imputation(double coverage, double perfect) {
        return JSON.createObjectNode().put("coverage90", coverage).put("coverage90OfPerfectModel", perfect);
    }

    private static ObjectNode denoising(double before, double after) {
        return JSON.createObjectNode().put("cells", 100).put("rmseBeforeInNoiseSd", before).put("rmseAfterInNoiseSd", after);
    }

    private static ObjectNode samples(double p, double closer) {
        return JSON.createObjectNode().put("energyPValue", p).put("shareCloserThanHeldOutFirstPercentile", closer);
    }
}
