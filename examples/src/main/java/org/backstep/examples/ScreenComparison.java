package org.backstep.examples;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.option.ThresholdRule;
import org.backstep.plot.Charts;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.RocArea;
import org.backstep.report.Surprisal;
import org.backstep.table.Table;

import java.io.IOException;
import java.io.PrintStream;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * The main job's screen measured against the injected faults (issue 13): the same screen by the
 * classical {@link Detectors}, fitted on the same training rows and thresholded at the same
 * held-out quantile, with precision, recall, the area under the ROC curve and both per fault kind;
 * the ROC chart; the columns to blame for caught faults; and the sentence on what a screen of
 * single rows can and cannot see.
 */
final class ScreenComparison {

    private ScreenComparison() {
    }

    /**
     * What a screen of single rows can and cannot see; printed by the demo and shown in the report.
     */
    static final String SINGLE_ROW_SENTENCE = "A screen of single rows judges each reading on its own: it sees a fault that makes "
            + "one reading unusual, by a value out of range or by columns that do not fit together (a humidity that does not "
            + "fit the cargo the temperatures show); it cannot see a slow drift or a stuck sensor until the fault has grown enough to make "
            + "one reading unusual, so it sees such faults only at their far end. For those, compare readings over time "
            + "(the change per reading of each container) or compare batches (drift).";

    /**
     * For model-space rows whose last {@code k.length} columns are category indices (K = k[j]), the
     * flat list of (column, category) pairs kept as indicators: categories 1..K-1 (the first is the
     * reference, as in dummy coding) that the training rows both show and do not always show, so that
     * no indicator is constant and the detectors' covariances stay invertible.
     */
    static int[] indicators(double[][] train, int[] k) {
        int width = train[0].length;
        int first = width - k.length;
        List<Integer> kept = new ArrayList<>();
        for (int j = 0; j < k.length; j++) {
            int[] count = new int[k[j]];
            for (double[] r : train) {
                count[(int) r[first + j]]++;
            }
            for (int q = 1; q < k[j]; q++) {
                if (count[q] > 0 && count[q] < train.length) {
                    kept.add(j * Table.MAX_CATEGORIES + q);
                }
            }
        }
        return kept.stream().mapToInt(Integer::intValue).toArray();
    }

    /** The rows with their category-index columns (the last {@code k.length}) replaced by the kept indicators. */
    static double[][] oneHot(double[][] rows, int[] k, int[] kept) {
        int first = rows.length == 0 ? 0 : rows[0].length - k.length;
        double[][] out = new double[rows.length][];
        for (int i = 0; i < rows.length; i++) {
            double[] r = java.util.Arrays.copyOf(rows[i], first + kept.length);
            for (int q = 0; q < kept.length; q++) {
                int j = kept[q] / Table.MAX_CATEGORIES;
                r[first + q] = rows[i][first + j] == kept[q] % Table.MAX_CATEGORIES ? 1 : 0;
            }
            out[i] = r;
        }
        return out;
    }

    /**
     * The same screen by classical detectors (Detectors), fitted on the same training rows in model
     * space and thresholded at the same quantile of their held-out scores: flagged rows, precision,
     * recall, the area under the ROC curve, recall per fault kind; and the ROC chart.
     *
     * @param names the table's column names
     * @param rows the table's complete rows in model space (the screened rows, all of them)
     * @param base the baselines of step 2, whose mixture the mixture detector reuses
     */
    static void compare(DiffusionModel model, List<String> names, MainJob.ModelRows rows, Baselines.Result base,
                        AnomalyScreen screen, MainJob.Config c, PrintStream console, ObjectNode a,
                        Map<String, String> charts) throws IOException {
        int[] scoredIndex = rows.index();
        int[] trainIndex = rows.trainIndex();
        double[][] trainM = rows.train();
        double[][] heldM = rows.held();
        double[][] scoredM = rows.all();
        int[] cats = model.transform().modelledCategories();
        if (cats.length > 0) {
            // a category's index is no number: each categorical column enters the detectors as 0/1 indicators
            int[] kept = indicators(trainM, cats);
            trainM = oneHot(trainM, cats, kept);
            heldM = oneHot(heldM, cats, kept);
            scoredM = oneHot(scoredM, cats, kept);
            console.println("   (the classical detectors see each categorical column as 0/1 indicator columns, one per category"
                    + " seen in their training rows less the first, like binary columns; the Gaussian mixture takes them as"
                    + " independent)");
        }
        int dc = model.transform().modelledContinuous().length;
        List<Detectors.Scores> detectors = new ArrayList<>();
        detectors.add(new Detectors.Scores("Backstep (diffusion bound)", screen.heldOutScores(), screen.scores()));
        detectors.add(Detectors.mahalanobis(trainM, heldM, scoredM));
        detectors.add(Detectors.mixture(trainM, heldM, scoredM, dc, base));
        detectors.add(Detectors.nearest(trainM, trainIndex, heldM, scoredM, scoredIndex));
        if (dc > 0) {
            detectors.add(Detectors.range(trainM, heldM, scoredM, dc));
        }
        boolean[] fault = new boolean[scoredIndex.length];
        List<Integer> faultRows = new ArrayList<>();
        for (int f = 0; f < scoredIndex.length; f++) {
            fault[f] = c.faults()[scoredIndex[f]];
            if (fault[f]) {
                faultRows.add(f);
            }
        }
        int[] faultArray = faultRows.stream().mapToInt(Integer::intValue).toArray();
        List<String> kinds = new ArrayList<>();
        if (c.faultKinds() != null) {
            for (int f : faultArray) {
                String k = c.faultKinds()[scoredIndex[f]];
                if (!kinds.contains(k)) {
                    kinds.add(k);
                }
            }
            java.util.Collections.sort(kinds);
        }
        int[] kindRows = new int[kinds.size()];
        for (int f : faultArray) {
            if (!kinds.isEmpty()) {
                kindRows[kinds.indexOf(c.faultKinds()[scoredIndex[f]])]++;
            }
        }
        console.printf(Locale.ROOT, "   The same screen by classical detectors, fitted on the same %d complete rows of the training part "
                + "(model space) and thresholded at the same held-out 99th percentile:%n", trainIndex.length);
        StringBuilder head = new StringBuilder(String.format(Locale.ROOT, "   %-42s %7s %9s %6s %6s", "detector", "flagged",
                "precision", "recall", "AUROC"));
        if (!kinds.isEmpty()) {
            head.append(" | recall / AUROC by fault kind:");
            for (int k = 0; k < kinds.size(); k++) {
                head.append(String.format(Locale.ROOT, " %s (%d rows)", kinds.get(k), kindRows[k]));
            }
        }
        console.println(head);
        boolean[] normal = new boolean[scoredIndex.length];
        for (int f = 0; f < scoredIndex.length; f++) {
            normal[f] = !fault[f];
        }
        ArrayNode out = a.putArray("detectors");
        Map<String, List<org.backstep.report.RocPoint>> curves = new LinkedHashMap<>();
        for (Detectors.Scores d : detectors) {
            double threshold = Stats.quantile(d.heldOut(), MainJob.SCREEN_QUANTILE);
            AnomalyScreen s = d == detectors.get(0) ? screen : new AnomalyScreen(ThresholdRule.quantile(MainJob.SCREEN_QUANTILE),
                    threshold, d.heldOut(), d.screened(), AnomalyScreen.flaggedAt(d.screened(), threshold), List.of(),
                    Surprisal.none(names));
            int tp = 0;
            int[] caught = new int[kinds.size()];
            for (int f : s.flagged()) {
                if (fault[f]) {
                    tp++;
                    if (!kinds.isEmpty()) {
                        caught[kinds.indexOf(c.faultKinds()[scoredIndex[f]])]++;
                    }
                }
            }
            double precision = s.flagged().length == 0 ? 0 : tp / (double) s.flagged().length;
            double recall = tp / (double) faultArray.length;
            List<org.backstep.report.RocPoint> roc = s.roc(faultArray);
            double auroc = s.rocArea(faultArray);
            curves.put(String.format(Locale.ROOT, "%s, area %.2f", d.name(), auroc), roc);
            ObjectNode o = out.addObject();
            o.put("detector", d.name());
            o.put("threshold", s.threshold());
            o.put("flagged", s.flagged().length);
            o.put("precision", precision);
            o.put("recall", recall);
            o.put("auroc", auroc);
            StringBuilder line = new StringBuilder(String.format(Locale.ROOT, "   %-42s %7d %9.2f %6.2f %6.2f", d.name(),
                    s.flagged().length, precision, recall, auroc));
            if (!kinds.isEmpty()) {
                ArrayNode byKind = o.putArray("byKind");
                line.append(" |");
                for (int k = 0; k < kinds.size(); k++) {
                    String kind = kinds.get(k);
                    boolean[] ofKind = new boolean[scoredIndex.length];
                    for (int f : faultArray) {
                        ofKind[f] = c.faultKinds()[scoredIndex[f]].equals(kind);
                    }
                    double kindRecall = caught[k] / (double) kindRows[k];
                    double kindArea = RocArea.of(d.screened(), ofKind, normal);
                    ObjectNode bk = byKind.addObject();
                    bk.put("kind", kind);
                    bk.put("rows", kindRows[k]);
                    bk.put("caught", caught[k]);
                    bk.put("recall", kindRecall);
                    bk.put("auroc", kindArea);
                    line.append(String.format(Locale.ROOT, "  %s %.2f / %.2f", kind, kindRecall, kindArea));
                }
            }
            console.println(line);
            if (d == detectors.get(0)) {
                a.put("auroc", auroc);
            }
        }
        charts.put(Report.ROC, MainJob.png(Charts.roc(curves)));
    }

    /**
     * The columns to blame, measured: for every caught fault (a flagged row, whose columns the screen
     * ranks by surprisal), the share whose injected column ranks first.
     */
    static void blame(DiffusionModel model, Table scoredRows, int[] scoredIndex, AnomalyScreen screen, MainJob.Config c,
                              PrintStream console, ObjectNode a) {
        if (c.faultColumns() == null) {
            return;
        }
        int[] caught = java.util.Arrays.stream(screen.flagged()).filter(f -> c.faultColumns()[scoredIndex[f]] != null
                && model.transform().names().contains(c.faultColumns()[scoredIndex[f]])).toArray();
        ObjectNode b = a.putObject("blame");
        b.put("caughtFaultRows", caught.length);
        if (caught.length == 0) {
            b.put("attributed", 0);
            b.put("injectedColumnFirst", 0);
            b.put("share", 0.0);
            console.println("   No fault was caught, so no column was blamed.");
            return;
        }
        // the screen's own figures (it ranks the columns of every flagged row): no second estimate
        org.backstep.report.Surprisal sur = screen.surprisal();
        int first = 0;
        Map<String, int[]> byKind = new java.util.TreeMap<>();
        for (int i = 0; i < caught.length; i++) {
            String injected = c.faultColumns()[scoredIndex[caught[i]]];
            boolean hit = sur.rankedForRow(caught[i]).get(0).column().equals(injected);
            first += hit ? 1 : 0;
            String kind = c.faultKinds() == null ? "fault" : c.faultKinds()[scoredIndex[caught[i]]];
            int[] k = byKind.computeIfAbsent(kind, x -> new int[2]);
            k[0]++;
            k[1] += hit ? 1 : 0;
        }
        double share = first / (double) caught.length;
        b.put("attributed", caught.length);
        b.put("injectedColumnFirst", first);
        b.put("share", share);
        ArrayNode bk = b.putArray("byKind");
        StringBuilder kinds = new StringBuilder();
        byKind.forEach((k, v) -> {
            ObjectNode o = bk.addObject();
            o.put("kind", k);
            o.put("attributed", v[0]);
            o.put("injectedColumnFirst", v[1]);
            kinds.append(String.format(Locale.ROOT, "%s%s %d of %d", kinds.length() == 0 ? "" : ", ", k, v[1], v[0]));
        });
        console.printf(Locale.ROOT, "   Columns to blame: of the %d caught fault caught, the injected column ranks first by surprisal"
                        + " in %d (%.0f%%): %s%n", caught.length, first, 100 * share, kinds);
    }

    /** Lines of at most {@code width} characters, broken at spaces. */
    static List<String> wrap(String text, int width) {
        List<String> lines = new ArrayList<>();
        StringBuilder line = new StringBuilder();
        for (String word : text.split(" ")) {
            if (line.length() > 0 && line.length() + 1 + word.length() > width) {
                lines.add(line.toString());
                line.setLength(0);
            }
            line.append(line.length() == 0 ? "" : " ").append(word);
        }
        if (line.length() > 0) {
            lines.add(line.toString());
        }
        return lines;
    }
}
