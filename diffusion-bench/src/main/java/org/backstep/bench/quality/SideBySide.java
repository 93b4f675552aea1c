package org.backstep.bench.quality;

import java.util.List;
import java.util.Locale;
import java.util.function.ToDoubleFunction;

import com.fasterxml.jackson.databind.JsonNode;

/** The printed table: Backstep's rows (one per lever, averaged over fit seeds) above the classical models. */
final class SideBySide {

    private SideBySide() {
    }

    private static final String HEADER = String.format(Locale.ROOT,
            "%-38s %8s %6s %6s %6s | %6s %5s %5s | %6s %5s %5s %8s | %7s%n",
            "table / model", "nats", "+-fits", "rec sd", "mn sd", "RMSE", "cov", "exp", "AUROC", "R@99", "R@95", "AUROC(b)",
            "fit s");

    static String render(String settings, List<OpenTable.Split> splits, List<Lever> levers, List<QualityBenchmark.Run> runs,
                         JsonNode baselines, int boundSeeds) {
        StringBuilder out = new StringBuilder(settings);
        out.append(String.format(Locale.ROOT, "classical baselines: %s%n%n",
                baselines.path("settings").path("versions").asText("quality-baselines.json")));
        out.append(HEADER);
        out.append("-".repeat(HEADER.length() - 1)).append('\n');
        for (OpenTable.Split split : splits) {
            String key = split.table().key();
            out.append(String.format(Locale.ROOT, "%s (%d train, %d test rows, %d columns)%n", split.table().label(),
                    split.train().rows(), split.test().rows(), split.train().columns()));
            for (Lever lever : levers) {
                List<QualityBenchmark.Run> rs = runs.stream().filter(r -> r.table().equals(key) && r.lever() == lever).toList();
                if (rs.isEmpty()) {
                    continue;
                }
                double[] nats = rs.stream().mapToDouble(QualityBenchmark.Run::nats).toArray();
                out.append(String.format(Locale.ROOT, "  %-36s %8.3f %6s %6.3f %6.3f | %6s %5s %5s | %6s %5s %5s %8s | %7.1f%n",
                        "Backstep " + lever + " (" + rs.size() + (rs.size() == 1 ? " fit)" : " fits)"),
                        Measures.mean(nats), rs.size() > 1 ? String.format(Locale.ROOT, "%.3f", Measures.sd(nats)) : "",
                        avg(rs, QualityBenchmark.Run::recordSd),
                        avg(rs, r -> Measures.sd(r.boundMeans())),
                        f(avg(rs, QualityBenchmark.Run::rmse), 3, 6), f(avg(rs, QualityBenchmark.Run::coverage), 3, 5),
                        f(avg(rs, QualityBenchmark.Run::expectedCoverage), 3, 5),
                        f(avg(rs, QualityBenchmark.Run::auroc), 4, 6), f(avg(rs, QualityBenchmark.Run::recall99), 2, 5),
                        f(avg(rs, QualityBenchmark.Run::recall95), 2, 5), f(avg(rs, QualityBenchmark.Run::aurocBound), 4, 8),
                        avg(rs, QualityBenchmark.Run::fitSeconds)));
            }
            JsonNode t = baselines.path("tables").path(key);
            JsonNode dens = t.path("density");
            JsonNode imp = t.path("imputation").path("models");
            JsonNode det = t.path("anomaly").path("detectors");
            if (dens.has("gaussian")) {
                classical(out, "one Gaussian", dens.path("gaussian"), imp.path("gaussian"), det.path("mahalanobis"));
                classical(out, "Gaussian mixture" + k(dens.path("mixture")), dens.path("mixture"), imp.path("mixture"),
                        det.path("mixture"));
                classical(out, "copula Gaussian" + h(dens.path("copula_gaussian")), dens.path("copula_gaussian"),
                        imp.path("copula_gaussian"), det.path("copula_gaussian"));
                classical(out, "copula mixture" + k(dens.path("copula_mixture")) + h(dens.path("copula_mixture")),
                        dens.path("copula_mixture"), imp.path("copula_mixture"), det.path("copula_mixture"));
            } else {
                classical(out, "independent Bernoulli", dens.path("bernoulli"), imp.path("bernoulli"), null);
                classical(out, "Bernoulli mixture" + k(dens.path("bernoulli_mixture")), dens.path("bernoulli_mixture"),
                        imp.path("bernoulli_mixture"), det.path("mixture"));
                classical(out, "Mahalanobis distance", null, null, det.path("mahalanobis"));
            }
            classical(out, "isolation forest", null, null, det.path("isolation_forest"));
            classical(out, "distance to 5th nearest", null, null, det.path("knn5"));
        }
        out.append(String.format(Locale.ROOT, "%n"
                + "nats: held-out negative log-likelihood per record (lower is better), standardized by the training rows'%n"
                + "  mean and population sd (SOURCES.md); Backstep: the exact bound over all T steps, mean over %d bound seeds%n"
                + "  and the fits; +-fits: sd over fit seeds; rec sd: per-record sd over the bound seeds (root mean square over%n"
                + "  records); mn sd: sd of the table mean over the bound seeds.%n"
                + "RMSE: imputation of 20%% of the test cells (the baselines file's cells), standardized units (digits: P(1));%n"
                + "  cov: share of hidden continuous cells inside the 90%% interval; exp: what a perfect model's intervals cover%n"
                + "  (Backstep: 20 draws, Imputation.expectedCoverage(); classical: exact conditional intervals).%n"
                + "AUROC: normal test rows against every anomalous row (breast_cancer: benign normal; digits: 0-8 normal);%n"
                + "  Backstep's from screen(), AUROC(b) from one exact bound; R@99, R@95: recall of anomalies above the 99th%n"
                + "  and 95th percentile of the normal test rows' scores. Classical rows: the model's own detector.%n"
                + "fit s: wall-clock seconds of fit() (Backstep, 2 threads) or of model selection and fit (classical),%n"
                + "  on a shared machine: compare within one run.%n"
                + "%s",
                boundSeeds, levers.size() > 1
                        ? String.format(Locale.ROOT, "Levers: the rows other than defaults fit Backstep, at its defaults, on the table%n"
                                + "  after a transform of org.backstep.table fitted on the training rows (normal scores: NORMAL_SCORES%n"
                                + "  with Silverman's bandwidth; whitened: standardized, then Whitening by the training covariance);%n"
                                + "  nats are taken back to the caller's units by the transform's exact log-Jacobian. A whitened%n"
                                + "  table mixes columns, so those rows have no imputation. N(0,I) part, fitted Gaussian part: fitted with%n"
                                + "  .baseline(STANDARD_NORMAL or FITTED_GAUSSIAN), the closed-form reverse model of that Gaussian plus the%n"
                                + "  network's correction (org.backstep.option.Baseline); whitened+N(0,I) part: both.%n")
                        : ""));
        return out.toString();
    }

    private static void classical(StringBuilder out, String label, JsonNode dens, JsonNode imp, JsonNode det) {
        boolean hasDensity = dens != null && !dens.isMissingNode();
        boolean hasImp = imp != null && !imp.isMissingNode();
        boolean hasDet = det != null && !det.isMissingNode();
        if (!hasDensity && !hasDet) {
            return;
        }
        out.append(String.format(Locale.ROOT, "  %-36s %8s %6s %6s %6s | %6s %5s %5s | %6s %5s %5s %8s | %7s%n",
                label, hasDensity ? f(dens.path("nats").asDouble(), 3, 8) : "", "", "", "",
                hasImp ? f(imp.path("rmse").asDouble(), 3, 6) : "",
                hasImp && imp.has("coverage") ? f(imp.path("coverage").asDouble(), 3, 5) : "",
                hasImp && imp.has("expected_coverage") ? f(imp.path("expected_coverage").asDouble(), 3, 5) : "",
                hasDet ? f(det.path("auroc").asDouble(), 4, 6) : "",
                hasDet ? f(det.path("recall_at_99").asDouble(), 2, 5) : "",
                hasDet ? f(det.path("recall_at_95").asDouble(), 2, 5) : "", "",
                hasDensity ? f(dens.path("seconds").asDouble(), 1, 7) : hasDet ? f(det.path("seconds").asDouble(), 1, 7) : ""));
    }

    private static String k(JsonNode d) {
        return d.has("components") ? " (" + d.path("components").asInt() + ")" : "";
    }

    private static String h(JsonNode d) {
        return d.has("bandwidth_multiple") ? String.format(Locale.ROOT, " h x%s", d.path("bandwidth_multiple").asText()) : "";
    }

    private static double avg(List<QualityBenchmark.Run> rs, ToDoubleFunction<QualityBenchmark.Run> f) {
        return rs.stream().mapToDouble(f).average().orElse(Double.NaN);
    }

    private static String f(double v, int decimals, int width) {
        return Double.isNaN(v) ? "" : String.format(Locale.ROOT, "%" + width + "." + decimals + "f", v);
    }
}
