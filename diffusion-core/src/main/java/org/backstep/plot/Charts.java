package org.backstep.plot;

import org.backstep.report.BoundReport;
import org.backstep.training.EpochRecord;
import org.backstep.report.StepPlan;
import org.backstep.report.TrainingPlan;
import org.backstep.io.AtomicFiles;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.schedule.Require;
import org.backstep.table.Table;
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
     * The mean of each bound term over the records: the decoder term L_0 at t = 1, L_{t-1} for
     * t &gt; 1, and the prior term L_T drawn at T + 1, on a log scale (Ho et al. 2020, eq. 5).
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
        XYChart c = chart("Bound terms per step (" + report.records() + " records)", "step t",
                "mean term, nats per record (model space)");
        c.getStyler().setYAxisLogarithmic(true);
        List<Double> t = new ArrayList<>();
        List<Double> v = new ArrayList<>();
        for (int k = 1; k < per.length; k++) {
            if (per[k] > 0) {
                t.add((double) k);
                v.add(per[k]);
            }
        }
        c.addSeries("L_{t-1}", t, v).setMarker(SeriesMarkers.NONE);
        if (per[0] > 0) {
            XYSeries prior = c.addSeries("prior L_T", new double[] {per.length}, new double[] {per[0]});
            prior.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
            prior.setMarker(SeriesMarkers.DIAMOND);
        }
        return c;
    }

    /**
     * Training loss and held-out bound against epoch.
     *
     * @param history the fitted model's history
     * @return the chart
     */
    public static XYChart trainingHistory(List<EpochRecord> history) {
        Require.notNull("history", history);
        Require.atLeast("epochs in history", history.size(), 1);
        XYChart c = chart("Training history", "epoch", "training loss (per cell)");
        c.setYAxisGroupTitle(1, "held-out bound, nats per record");
        c.getStyler().setYAxisGroupPosition(1, Styler.YAxisPosition.Right);
        double[] e = new double[history.size()];
        double[] l = new double[history.size()];
        List<Double> be = new ArrayList<>();
        List<Double> bv = new ArrayList<>();
        for (int i = 0; i < e.length; i++) {
            EpochRecord r = history.get(i);
            e[i] = r.epoch();
            l[i] = r.loss();
            if (r.checkpointBound().isPresent()) {
                be.add((double) r.epoch());
                bv.add(r.checkpointBound().getAsDouble());
            }
        }
        c.addSeries("training loss", e, l).setMarker(SeriesMarkers.NONE);
        if (!be.isEmpty()) {
            XYSeries s = c.addSeries("held-out bound", be, bv);
            s.setMarker(SeriesMarkers.CIRCLE);
            s.setYAxisGroup(1);
        }
        return c;
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
     * The step planner's quality (held-out bound) against cost (ms per 1,000 samples), the
     * recommended step count marked; step counts whose chain left the float range have no cost and
     * are left out.
     *
     * @param plan the planner's findings
     * @return the chart
     * @throws IllegalArgumentException if no step count has a cost
     */
    public static XYChart stepPlan(StepPlan plan) {
        Require.notNull("plan", plan);
        XYChart c = chart("Step count: quality against cost", "milliseconds per 1,000 samples",
                "held-out bound, nats per dimension");
        c.getStyler().setXAxisLogarithmic(true);
        List<StepPlan.Row> timed = plan.rows().stream().filter(r -> Double.isFinite(r.millisPer1000())).toList();
        if (timed.isEmpty()) {
            throw new IllegalArgumentException("plan has no step count whose sampling chain stayed finite; there is no cost to plot");
        }
        double[] x = timed.stream().mapToDouble(StepPlan.Row::millisPer1000).toArray();
        double[] y = timed.stream().mapToDouble(StepPlan.Row::boundNatsPerDimension).toArray();
        c.addSeries("step counts", x, y).setMarker(SeriesMarkers.CIRCLE);
        StepPlan.Row pick = timed.stream().filter(r -> r.steps() == plan.recommended()).findFirst().orElse(null);
        if (pick == null) {
            return c;
        }
        XYSeries mark = c.addSeries("recommended: " + pick.steps() + " steps", new double[] {pick.millisPer1000()},
                new double[] {pick.boundNatsPerDimension()});
        mark.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Scatter);
        mark.setMarker(SeriesMarkers.DIAMOND);
        return c;
    }

    /**
     * The training planner's quality (held-out bound per dimension, with bars of one standard
     * error) against cost (ms per 1,000 samples at each model's T): one legend entry per T with
     * its bound, the recommended T drawn as a diamond. Models whose sampling chain diverged have no
     * cost and are named in the title instead.
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
        double xMin = java.util.Arrays.stream(x).min().orElseThrow();
        double xMax = java.util.Arrays.stream(x).max().orElseThrow();
        boolean logarithmic = xMin > 0 && xMax / xMin > 20;   // a linear axis keeps its tick labels over a short range
        c.getStyler().setXAxisLogarithmic(logarithmic);
        c.getStyler().setErrorBarsColorSeriesColor(true);
        c.getStyler().setMarkerSize(9);
        XYSeries line = c.addSeries("models in increasing T", x, y);
        line.setMarker(SeriesMarkers.NONE).setLineColor(new Color(0xA0AEC0));
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
