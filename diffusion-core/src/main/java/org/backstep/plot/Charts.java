package org.backstep.plot;

import org.backstep.report.BoundReport;
import org.backstep.report.RocPoint;
import org.backstep.training.EpochRecord;
import org.backstep.report.StepPlan;
import org.backstep.report.TrainingPlan;
import org.backstep.io.AtomicFiles;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;
import org.backstep.table.Table;
import org.knowm.xchart.AnnotationText;
import org.knowm.xchart.AnnotationTextPanel;
import org.knowm.xchart.BitmapEncoder;
import org.knowm.xchart.VectorGraphicsEncoder;
import org.knowm.xchart.XYChart;
import org.knowm.xchart.XYChartBuilder;
import org.knowm.xchart.XYSeries;
import org.knowm.xchart.internal.chartpart.Chart;
import org.knowm.xchart.style.Styler;
import org.knowm.xchart.style.markers.SeriesMarkers;

import java.awt.BasicStroke;
import java.awt.Color;
import java.awt.Font;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * The charts Backstep draws, each legible at the default 800 x 600 pixels with axis titles and
 * units, in a palette of our own (deep teal, amber, slate, brick, moss, plum). Charts are XChart
 * objects, so a caller may restyle them before {@link #save(Chart, Path)}.
 *
 * <p>One file of more than 400 lines: each chart is a short static method, and they share the styling and the atomic saving.
 */
public final class Charts {

    /** Default width in pixels. */
    public static final int WIDTH = 800;
    /** Default height in pixels. */
    public static final int HEIGHT = 600;

    /** Backstep's palette. */
    static final Color[] PALETTE = {
        new Color(0x0B6E6E), new Color(0xE0A030), new Color(0x4A5568), new Color(0xB5523B),
        new Color(0x6B8E23), new Color(0x7B4B94)
    };

    /** Lines of a chart's note, at most, before "and N more". */
    private static final int NOTE_LINES = 4;

    private Charts() {
    }

    private static XYChart chart(String title, String x, String y) {
        XYChart c = new XYChartBuilder().width(WIDTH).height(HEIGHT).title(title).xAxisTitle(x).yAxisTitle(y).build();
        Styler s = c.getStyler();
        s.setSeriesColors(PALETTE);
        s.setChartBackgroundColor(Color.WHITE);
        s.setPlotBackgroundColor(new Color(0xF7F7F2));
        s.setChartFontColor(new Color(0x1F2933));
        s.setLegendPosition(Styler.LegendPosition.InsideNE);
        s.setAntiAlias(true);
        s.setChartTitleFont(new Font(Font.SANS_SERIF, Font.BOLD, 18));
        s.setLegendFont(new Font(Font.SANS_SERIF, Font.PLAIN, 13));
        c.getStyler().setAxisTitleFont(new Font(Font.SANS_SERIF, Font.PLAIN, 14));
        c.getStyler().setAxisTickLabelsFont(new Font(Font.SANS_SERIF, Font.PLAIN, 12));
        c.getStyler().setPlotGridLinesColor(new Color(0xD9D9CF));
        c.getStyler().setMarkerSize(5);
        c.getStyler().setAnnotationTextPanelFont(new Font(Font.SANS_SERIF, Font.PLAIN, 13));
        c.getStyler().setAnnotationTextPanelFontColor(new Color(0x1F2933));
        c.getStyler().setAnnotationTextPanelBorderColor(new Color(0xD9D9CF));
        return c;
    }

    private static double[] steps(int n) {
        double[] t = new double[n];
        for (int i = 0; i < n; i++) {
            t[i] = i + 1;
        }
        return t;
    }

    /**
     * alpha-bar_t (left axis) and log-SNR_t = log(alpha-bar_t / (1 - alpha-bar_t)) (right axis)
     * against t for several schedules on one chart (see {@link NoiseSchedule}).
     *
     * @param schedules label to schedule, in legend order
     * @return the chart
     */
    public static XYChart schedules(Map<String, NoiseSchedule> schedules) {
        Require.notNull("schedules", schedules);
        XYChart c = chart("Noise schedules", "step t", "alpha-bar (solid)");
        c.setYAxisGroupTitle(1, "log-SNR, natural log (dashed)");
        c.getStyler().setYAxisGroupPosition(1, Styler.YAxisPosition.Right);
        int i = 0;
        for (Map.Entry<String, NoiseSchedule> e : schedules.entrySet()) {
            NoiseSchedule s = e.getValue();
            double[] t = steps(s.steps());
            double[] ab = s.alphaBars();
            List<Double> tt = new ArrayList<>();
            List<Double> snr = new ArrayList<>();
            for (int k = 1; k <= s.steps(); k++) {
                double v = s.logSnr(k);
                if (Double.isFinite(v)) {
                    tt.add((double) k);
                    snr.add(v);
                }
            }
            Color col = PALETTE[i++ % PALETTE.length];
            XYSeries a = c.addSeries(e.getKey() + " alpha-bar", t, ab);
            a.setMarker(SeriesMarkers.NONE).setLineColor(col);
            XYSeries l = c.addSeries(e.getKey() + " log-SNR", tt, snr);
            l.setMarker(SeriesMarkers.NONE);
            l.setLineColor(col);
            l.setLineStyle(new BasicStroke(2f, BasicStroke.CAP_BUTT, BasicStroke.JOIN_MITER, 10f, new float[] {6f, 4f}, 0f));
            l.setYAxisGroup(1);
        }
        return c;
    }

    /**
     * The mean of each bound term over the records on a log scale (Ho et al. 2020, eq. 5): the
     * decoder term L_0 at t = 1, L_{t-1} for t &gt; 1, and the prior term L_T drawn at T + 1. A
     * term that is not above 0 has no place on a log scale: the decoder term of continuous columns
     * is the negative log of a density and is often negative. Such a term is not drawn, and a note
     * on the chart gives its value, so that no term is left out silently.
     *
     * @param report an exact bound report
     * @return the chart
     */
    public static XYChart boundBreakdown(BoundReport report) {
        Require.notNull("report", report);
        double[] per = report.perStepMean();
        if (per.length == 0) {
            throw new IllegalArgumentException("report is a Monte Carlo estimate; the breakdown needs the exact bound");
        }
        XYChart c = chart("Bound terms per step (" + report.records() + " records)", "step t (prior term at T + 1)",
                "mean term, nats per record (model space)");
        c.getStyler().setYAxisLogarithmic(true);
        List<Double> t = new ArrayList<>();
        List<Double> v = new ArrayList<>();
        List<String> notDrawn = new ArrayList<>();
        for (int k = 2; k < per.length; k++) {
            if (per[k] > 0) {
                t.add((double) k);
                v.add(per[k]);
            } else {
                notDrawn.add(String.format(Locale.ROOT, "L_%d at t = %d: %.4g nats", k - 1, k, per[k]));
            }
        }
        if (!t.isEmpty()) {
            c.addSeries("L_{t-1}, t = 2.." + (per.length - 1), t, v).setMarker(SeriesMarkers.NONE);
        }
        if (per.length > 1) {
            if (per[1] > 0) {
                XYSeries decoder = c.addSeries(String.format(Locale.ROOT, "decoder L_0 at t = 1: %.3g", per[1]),
                        new double[] {1}, new double[] {per[1]});
                decoder.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
                decoder.setMarker(SeriesMarkers.SQUARE);
            } else {
                notDrawn.add(0, String.format(Locale.ROOT, "decoder L_0 at t = 1: %.3f nats", per[1]));
            }
        }
        if (per[0] > 0) {
            XYSeries prior = c.addSeries(String.format(Locale.ROOT, "prior L_T at T + 1: %.3g", per[0]),
                    new double[] {per.length}, new double[] {per[0]});
            prior.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
            prior.setMarker(SeriesMarkers.DIAMOND);
        } else {
            notDrawn.add(String.format(Locale.ROOT, "prior L_T: %.4g nats", per[0]));
        }
        if (c.getSeriesMap().isEmpty()) {
            throw new IllegalArgumentException("no bound term of the report is above 0; there is nothing to draw on a log scale");
        }
        if (!notDrawn.isEmpty()) {
            List<String> lines = new ArrayList<>();
            lines.add("Not drawn (not above 0, so not on a log scale):");
            lines.addAll(notDrawn.size() > NOTE_LINES ? notDrawn.subList(0, NOTE_LINES) : notDrawn);
            if (notDrawn.size() > NOTE_LINES) {
                lines.add("and " + (notDrawn.size() - NOTE_LINES) + " more");
            }
            c.addAnnotation(new AnnotationTextPanel(String.join("\n", lines), 90, 80, true));
        }
        return c;
    }

    /**
     * Training loss and the checkpoint rows' bound against epoch. The per-epoch loss of small
     * minibatches is noisy, so it is drawn faint with its running mean over a window of about a
     * fiftieth of the epochs (at least 1) drawn over it. An epoch's loss is its minibatches' mean,
     * drawn at the middle of the epoch (e - 0.5); the bound is measured at the end of its epoch (e).
     * (Besides being where each belongs, this keeps XChart from reading the epochs as equally spaced
     * categories, whose tick labels it packs until they touch.) The bound is that of the trainer's
     * own checkpoint rows (the share of the training rows it keeps back to choose its weights), on
     * the right axis.
     *
     * @param history the fitted model's history
     * @return the chart
     */
    public static XYChart trainingHistory(List<EpochRecord> history) {
        Require.notNull("history", history);
        Require.atLeast("epochs in history", history.size(), 1);
        XYChart c = chart("Training history", "epoch", "training loss (per cell)");
        c.setYAxisGroupTitle(1, "checkpoint rows' bound, nats per record");
        c.getStyler().setYAxisGroupPosition(1, Styler.YAxisPosition.Right);
        c.getStyler().setXAxisMin(0.0);
        double[] e = new double[history.size()];
        double[] l = new double[history.size()];
        List<Double> be = new ArrayList<>();
        List<Double> bv = new ArrayList<>();
        for (int i = 0; i < e.length; i++) {
            EpochRecord r = history.get(i);
            e[i] = r.epoch() - 0.5;
            l[i] = r.loss();
            if (r.checkpointBound().isPresent()) {
                be.add((double) r.epoch());
                bv.add(r.checkpointBound().getAsDouble());
            }
        }
        int window = Math.max(1, e.length / 50);
        XYSeries raw = c.addSeries("training loss, each epoch", e, l);
        raw.setMarker(SeriesMarkers.NONE).setLineColor(new Color(0xB8D4D4));
        raw.setLineWidth(1f);
        if (window > 1) {
            XYSeries mean = c.addSeries("training loss, running mean of " + window + " epochs", e, runningMean(l, window));
            mean.setMarker(SeriesMarkers.NONE).setLineColor(PALETTE[0]);
            mean.setLineWidth(2.5f);
        }
        if (!be.isEmpty()) {
            XYSeries s = c.addSeries("checkpoint rows' bound", be, bv);
            s.setMarker(SeriesMarkers.CIRCLE);
            s.setLineColor(PALETTE[1]);
            s.setMarkerColor(PALETTE[1]);
            s.setYAxisGroup(1);
        }
        return c;
    }

    /** The mean of the last {@code window} values up to each index (fewer at the start). */
    static double[] runningMean(double[] v, int window) {
        double[] m = new double[v.length];
        double sum = 0;
        for (int i = 0; i < v.length; i++) {
            sum += v[i];
            if (i >= window) {
                sum -= v[i - window];
            }
            m[i] = sum / Math.min(i + 1, window);
        }
        return m;
    }

    /**
     * Histogram of per-record scores with the threshold drawn as a vertical line.
     *
     * @param scores bounds in nats per record
     * @param threshold the flagging threshold
     * @param bins number of bins, at least 2
     * @return the chart
     */
    public static XYChart scoreHistogram(double[] scores, double threshold, int bins) {
        Require.notNull("scores", scores);
        Require.atLeast("scores", scores.length, 1);
        Require.atLeast("bins", bins, 2);
        double lo = Math.min(threshold, java.util.Arrays.stream(scores).min().orElseThrow());
        double hi = Math.max(threshold, java.util.Arrays.stream(scores).max().orElseThrow());
        double w = (hi - lo) / bins;
        if (w <= 0) {
            w = 1.0;
        }
        double[] count = new double[bins];
        for (double s : scores) {
            int b = (int) Math.min(bins - 1, Math.floor((s - lo) / w));
            count[b]++;
        }
        double[] x = new double[2 * bins];
        double[] y = new double[2 * bins];
        for (int b = 0; b < bins; b++) {
            x[2 * b] = lo + b * w;
            x[2 * b + 1] = lo + (b + 1) * w;
            y[2 * b] = count[b];
            y[2 * b + 1] = count[b];
        }
        XYChart c = chart("Anomaly scores", "bound, nats per record (model space)", "records");
        c.addSeries("records", x, y).setMarker(SeriesMarkers.NONE);
        double top = java.util.Arrays.stream(count).max().orElse(1.0);
        c.addSeries(String.format(Locale.ROOT, "threshold %.2f", threshold), new double[] {threshold, threshold},
                new double[] {0.0, top}).setMarker(SeriesMarkers.NONE);
        return c;
    }

    /**
     * Receiver operating characteristics, one line per detector (as {@code AnomalyScreen.roc}
     * gives them: false-positive rate against true-positive rate, each point the shares of normal
     * and of faulty records flagged above one threshold), with the diagonal of a detector that
     * guesses. The legend carries each curve's area when the caller puts it in the name.
     *
     * @param curves name to points, in legend order; each with at least one point
     * @return the chart
     * @throws IllegalArgumentException if there is no curve, or a curve is empty
     */
    public static XYChart roc(Map<String, List<RocPoint>> curves) {
        Require.notNull("curves", curves);
        Require.atLeast("curves", curves.size(), 1);
        XYChart c = chart("Screens against known faults (ROC)", "false-positive rate (share of normal records flagged)",
                "true-positive rate (share of faulty records flagged)");
        c.getStyler().setXAxisDecimalPattern("0.0").setYAxisDecimalPattern("0.0");
        c.getStyler().setLegendPosition(Styler.LegendPosition.InsideSE);
        for (Map.Entry<String, List<RocPoint>> e : curves.entrySet()) {
            List<RocPoint> pts = Require.notNull("curve " + e.getKey(), e.getValue());
            Require.atLeast("points of curve " + e.getKey(), pts.size(), 1);
            double[] x = new double[pts.size()];
            double[] y = new double[pts.size()];
            for (int i = 0; i < x.length; i++) {
                x[i] = pts.get(i).falsePositiveRate();
                y[i] = pts.get(i).truePositiveRate();
            }
            XYSeries line = c.addSeries(e.getKey(), x, y);
            line.setMarker(SeriesMarkers.NONE);
            line.setLineStyle(new BasicStroke(2.0f));
        }
        XYSeries chance = c.addSeries("chance", new double[] {0.0, 1.0}, new double[] {0.0, 1.0});
        chance.setMarker(SeriesMarkers.NONE);
        chance.setLineColor(new Color(0xB0B0A8));
        chance.setLineStyle(new BasicStroke(1.0f, BasicStroke.CAP_BUTT, BasicStroke.JOIN_MITER, 10f, new float[] {6f, 4f}, 0f));
        return c;
    }

    /**
     * Scatter of two columns, samples against held-out rows, in original units.
     *
     * @param samples synthetic rows
     * @param heldOut real rows
     * @param xColumn the column on the x axis
     * @param yColumn the column on the y axis
     * @return the chart
     */
    public static XYChart pairPlot(Table samples, Table heldOut, String xColumn, String yColumn) {
        Require.notNull("samples", samples);
        Require.notNull("heldOut", heldOut);
        Require.notNull("xColumn", xColumn);
        Require.notNull("yColumn", yColumn);
        XYChart c = chart("Samples against held-out rows", xColumn, yColumn);
        c.getStyler().setDefaultSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
        c.getStyler().setMarkerSize(4);
        addPoints(c, "held-out rows", heldOut, xColumn, yColumn);
        addPoints(c, "samples", samples, xColumn, yColumn);
        return c;
    }

    private static void addPoints(XYChart c, String name, Table t, String xColumn, String yColumn) {
        int xi = t.indexOf(xColumn);
        int yi = t.indexOf(yColumn);
        List<Double> x = new ArrayList<>();
        List<Double> y = new ArrayList<>();
        for (int r = 0; r < t.rows(); r++) {
            double a = t.get(r, xi);
            double b = t.get(r, yi);
            if (!Double.isNaN(a) && !Double.isNaN(b)) {
                x.add(a);
                y.add(b);
            }
        }
        if (!x.isEmpty()) {
            c.addSeries(name, x, y).setMarker(SeriesMarkers.CIRCLE);
        }
    }

    /**
     * The step planner's quality (held-out bound) against cost (ms per 1,000 samples): one marker
     * per step count, labelled with it, the recommended step count drawn as a diamond. The points
     * are not joined: timings are noisy, and a line through them in step order could fold back. The
     * cost axis is logarithmic only when it then carries at least two labelled powers of ten.
     *
     * @param plan the planner's findings
     * @return the chart
     * @throws IllegalArgumentException if no step count has a cost
     */
    public static XYChart stepPlan(StepPlan plan) {
        Require.notNull("plan", plan);
        // step counts whose chain left the float range have no cost and are left out
        List<StepPlan.Row> rows = plan.rows().stream().filter(r -> Double.isFinite(r.millisPer1000())).toList();
        if (rows.isEmpty()) {
            throw new IllegalArgumentException("no step count of the plan has a cost: every chain left the float range");
        }
        XYChart c = chart("Sampling step count K: quality against cost", "milliseconds per 1,000 samples",
                "held-out bound, nats per dimension");
        double[] x = rows.stream().mapToDouble(StepPlan.Row::millisPer1000).toArray();
        double[] y = rows.stream().mapToDouble(StepPlan.Row::boundNatsPerDimension).toArray();
        c.getStyler().setXAxisLogarithmic(logarithmicKeepsLabels(x));
        c.getStyler().setMarkerSize(9);
        StepPlan.Row pick = rows.stream().filter(r -> r.steps() == plan.recommended()).findFirst().orElse(rows.get(0));
        List<Double> ox = new ArrayList<>();
        List<Double> oy = new ArrayList<>();
        for (StepPlan.Row r : rows) {
            if (r != pick) {
                ox.add(r.millisPer1000());
                oy.add(r.boundNatsPerDimension());
            }
        }
        if (!ox.isEmpty()) {
            XYSeries others = c.addSeries("step counts", ox, oy);
            others.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
            others.setMarker(SeriesMarkers.CIRCLE);
        }
        XYSeries mark = c.addSeries("recommended: " + pick.steps() + " steps", new double[] {pick.millisPer1000()},
                new double[] {pick.boundNatsPerDimension()});
        mark.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
        mark.setMarker(SeriesMarkers.DIAMOND);
        label(c, rows.stream().map(r -> r.steps() + " steps").toList(), x, y, new double[x.length]);
        return c;
    }

    /**
     * Writes each point's label just above it (above its error bar of half-height {@code bar[i]}),
     * in data coordinates (the y axis is linear); the y range is padded so that the top label stays
     * inside the plot.
     */
    private static void label(XYChart c, List<String> labels, double[] x, double[] y, double[] bar) {
        double lo = Double.POSITIVE_INFINITY;
        double hi = Double.NEGATIVE_INFINITY;
        for (int i = 0; i < y.length; i++) {
            lo = Math.min(lo, y[i] - bar[i]);
            hi = Math.max(hi, y[i] + bar[i]);
        }
        double span = hi > lo ? hi - lo : Math.max(1e-9, Math.abs(hi));
        c.getStyler().setYAxisMin(lo - 0.05 * span);
        c.getStyler().setYAxisMax(hi + 0.12 * span);
        c.getStyler().setAnnotationTextFont(new Font(Font.SANS_SERIF, Font.PLAIN, 13));
        c.getStyler().setAnnotationTextFontColor(new Color(0x1F2933));
        for (int i = 0; i < labels.size(); i++) {
            c.addAnnotation(new AnnotationText(labels.get(i), x[i], y[i] + bar[i] + 0.05 * span, false));
        }
    }

    /**
     * Whether a logarithmic axis over these positive values would carry at least two labelled
     * ticks: XChart labels a logarithmic axis at powers of ten only, so a range inside one decade
     * would show no number at all.
     */
    static boolean logarithmicKeepsLabels(double[] values) {
        double min = java.util.Arrays.stream(values).min().orElseThrow();
        double max = java.util.Arrays.stream(values).max().orElseThrow();
        return min > 0 && Math.floor(Math.log10(max)) - Math.ceil(Math.log10(min)) >= 1;
    }

    /**
     * The training planner's quality (held-out bound per dimension, with bars of one standard
     * error) against cost (ms per 1,000 samples at each model's T): one legend entry per T with
     * its bound, each point labelled with its T, the recommended T drawn as a diamond. The points
     * are not joined (noisy timings could fold a line back). Models whose sampling chain diverged
     * have no cost and are named in the title instead.
     *
     * @param plan the planner's findings
     * @return the chart
     * @throws IllegalArgumentException if every model's sampling chain diverged (nothing to place)
     */
    public static XYChart trainingPlan(TrainingPlan plan) {
        Require.notNull("plan", plan);
        List<TrainingPlan.Row> drawn = plan.rows().stream().filter(r -> !r.samplesDiverged()).toList();
        if (drawn.isEmpty()) {
            throw new IllegalArgumentException("plan has no model whose samples stayed finite; there is no cost to plot");
        }
        String left = plan.rows().stream().filter(TrainingPlan.Row::samplesDiverged)
                .map(r -> Integer.toString(r.steps())).collect(java.util.stream.Collectors.joining(", "));
        XYChart c = chart("Diffusion steps T, each trained on " + plan.budget() + (left.isEmpty() ? "" : " (diverged: T = " + left + ")"),
                "milliseconds per 1,000 samples at the model's T", "held-out bound, nats per dimension");
        double[] x = drawn.stream().mapToDouble(TrainingPlan.Row::millisPer1000).toArray();
        double[] y = drawn.stream().mapToDouble(TrainingPlan.Row::boundNatsPerDimension).toArray();
        c.getStyler().setXAxisLogarithmic(logarithmicKeepsLabels(x));
        c.getStyler().setErrorBarsColorSeriesColor(true);
        c.getStyler().setMarkerSize(9);
        TrainingPlan.Row pick = plan.recommendedRow();
        int i = 0;
        for (TrainingPlan.Row r : drawn) {
            String label = String.format(Locale.ROOT, "T = %d: %.3f +/- %.3f%s", r.steps(), r.boundNatsPerDimension(),
                    r.boundStandardError(), r == pick ? ", recommended" : "");
            XYSeries point = c.addSeries(label, new double[] {r.millisPer1000()}, new double[] {r.boundNatsPerDimension()},
                    new double[] {r.boundStandardError()});
            point.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
            point.setMarker(r == pick ? SeriesMarkers.DIAMOND : SeriesMarkers.CIRCLE);
            Color colour = PALETTE[i++ % PALETTE.length];
            point.setMarkerColor(colour);
            point.setLineColor(colour);     // the error bar takes the series' line colour
        }
        label(c, drawn.stream().map(r -> "T = " + r.steps()).toList(), x, y,
                drawn.stream().mapToDouble(TrainingPlan.Row::boundStandardError).toArray());
        return c;
    }

    /**
     * Writes a chart atomically; the format follows the extension: {@code .png} or {@code .svg}.
     *
     * @param chart the chart
     * @param file where, ending in .png or .svg
     * @throws IOException if it cannot be written (an existing file is then left as it was)
     */
    public static void save(Chart<?, ?> chart, Path file) throws IOException {
        Require.notNull("chart", chart);
        Require.notNull("file", file);
        String name = file.getFileName().toString().toLowerCase(Locale.ROOT);
        byte[] bytes;
        if (name.endsWith(".png")) {
            bytes = BitmapEncoder.getBitmapBytes(chart, BitmapEncoder.BitmapFormat.PNG);
        } else if (name.endsWith(".svg")) {
            ByteArrayOutputStream out = new ByteArrayOutputStream();
            VectorGraphicsEncoder.saveVectorGraphic(chart, out, VectorGraphicsEncoder.VectorGraphicsFormat.SVG);
            bytes = out.toByteArray();
        } else {
            throw new IllegalArgumentException("file is " + file + "; expected a name ending in .png or .svg");
        }
        AtomicFiles.write(file, bytes);
    }
}
