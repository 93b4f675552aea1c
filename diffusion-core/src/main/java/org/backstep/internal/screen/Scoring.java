package org.backstep.internal.screen;

import org.backstep.internal.chain.BoundEvaluator;
import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.CommonNoiseBound;
import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.Imputer;
import org.backstep.internal.chain.ScoringRange;
import org.backstep.internal.flow.ProbabilityFlow;
import org.backstep.option.BoundOptions;
import org.backstep.option.FlowOptions;
import org.backstep.option.MissingCells;
import org.backstep.report.CellNote;
import org.backstep.report.Imputation;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.List;
import java.util.function.Function;
import java.util.stream.IntStream;

/**
 * The score of every record of a table, never missing: a record with a cell the model cannot score
 * ({@link ScoringRange}) scores +infinity; a record with a missing cell is refused or imputed (the
 * mean of its completions' scores, see {@link MissingCells}); the rest score their bound with
 * common random numbers ({@link CommonNoiseBound}), so that a record's score does not depend on
 * the table it stands in.
 */
public final class Scoring {

    /** Keeps the imputation's draws apart from the bound's shared noise of the same seed. */
    static final long IMPUTATION_SALT = 0x5C0FE5EEDL;

    private Scoring() {
    }

    /**
     * Scores and what was done to which cells.
     *
     * @param scores per record, nats, model space; +infinity for an unscorable record
     * @param notes the unscorable and the imputed cells, in row order
     */
    public record Scored(double[] scores, List<CellNote> notes) {

        /** @return true if some record scores +infinity */
        public boolean anyUnscorable() {
            return notes.stream().anyMatch(CellNote::unscorable);
        }
    }

    /**
     * @param engine the model's engine
     * @param records records with the model's columns (the layout checked by the caller)
     * @param bound the bound (a sampled one is capped at T draws)
     * @param missing refuse or impute a missing cell
     * @param name what the table is called in messages ("records", "heldOut", ...)
     * @param seed the seed of the shared draws (the same for every table compared)
     * @return every record's score and the notes
     * @throws IllegalArgumentException naming the first missing cell when refusing, or an empty table
     */
    public static Scored score(Engine engine, Table records, BoundOptions bound, MissingCells missing, String name,
                               long seed) {
        return score(engine, records, complete -> bound(engine, complete, bound, seed), missing, name, seed);
    }

    /**
     * {@link #score(Engine, Table, BoundOptions, MissingCells, String, long)} with the score of complete,
     * scorable records given.
     *
     * @param scorer the per-record score of a table of complete, scorable records
     */
    public static Scored score(Engine engine, Table records, Function<Table, double[]> scorer, MissingCells missing,
                               String name, long seed) {
        int rows = records.rows();
        if (rows == 0) {
            throw new IllegalArgumentException(name + " has 0 rows; expected at least 1");
        }
        List<CellNote> unscorable = ScoringRange.unscorable(records, engine.transform(), ScoringRange.limit(engine.chain()));
        boolean[] infinite = new boolean[rows];
        for (CellNote n : unscorable) {
            infinite[n.row()] = true;
        }
        int[] incomplete = IntStream.of(records.incompleteRowIndices()).filter(r -> !infinite[r]).toArray();
        if (incomplete.length > 0 && !missing.impute()) {
            int r = incomplete[0];
            for (int c = 0; c < records.columns(); c++) {
                if (Double.isNaN(records.get(r, c))) {
                    throw new IllegalArgumentException(name + " row " + r + ", column '" + records.name(c)
                            + "' is missing; refused by " + missing + " (impute the records first, or pass "
                            + "MissingCells.impute(...))");
                }
            }
        }
        boolean[] skip = infinite.clone();
        for (int r : incomplete) {
            skip[r] = true;
        }
        int[] complete = IntStream.range(0, rows).filter(r -> !skip[r]).toArray();
        double[] scores = new double[rows];
        for (int r = 0; r < rows; r++) {
            if (infinite[r]) {
                scores[r] = Double.POSITIVE_INFINITY;
            }
        }
        if (complete.length > 0) {
            double[] s = scorer.apply(records.selectRows(complete));
            for (int i = 0; i < complete.length; i++) {
                scores[complete[i]] = s[i];
            }
        }
        List<CellNote> notes = new ArrayList<>(unscorable);
        if (incomplete.length > 0) {
            Table part = records.selectRows(incomplete);
            Imputation imp = Imputer.impute(engine, part, missing.imputation(), seed ^ IMPUTATION_SALT);
            double[] sum = new double[incomplete.length];
            for (Table completion : imp.draws()) {
                double[] s = scorer.apply(completion);
                for (int i = 0; i < s.length; i++) {
                    sum[i] += s[i];
                }
            }
            int k = imp.draws().size();
            for (int i = 0; i < incomplete.length; i++) {
                int r = incomplete[i];
                scores[r] = sum[i] / k;
                for (int c = 0; c < records.columns(); c++) {
                    if (Double.isNaN(records.get(r, c))) {
                        notes.add(CellNote.of(r, records.name(c), Double.NaN, CellNote.Kind.IMPUTED,
                                "imputed; the record's score is the mean over " + k + " completions"));
                    }
                }
            }
        }
        notes.sort(java.util.Comparator.comparingInt(CellNote::row));
        return new Scored(scores, List.copyOf(notes));
    }

    /**
     * The exact negative log-likelihood of the probability-flow ODE of complete, scorable records
     * ({@link ProbabilityFlow}; no draws).
     */
    static double[] flow(Engine engine, Table records, FlowOptions how) {
        ProbabilityFlow flow = new ProbabilityFlow(engine.parts(), how.relativeTolerance(), how.absoluteTolerance());
        return engine.standardizedNats(
                flow.evaluate(engine.modelSpace(records), records.rows(), engine.parts().options().threads()).nats);
    }

    /**
     * The bound with common random numbers of complete, scorable records. An exact bound with
     * several draws per term or the linearized control variate ({@link BoundOptions#steady}) gives
     * every record the same seed, so that every record draws the same points (common random numbers
     * again, and a record's score does not depend on the other records; an allocated plan comes from
     * the model's own profile, {@link Engine#drawPlan}, never from the records).
     */
    static double[] bound(Engine engine, Table records, BoundOptions how, long seed) {
        float[] x = engine.modelSpace(records);
        if (!how.sampled() && (how.termDraws() > 1 || how.linearized())) {
            Chain c = engine.chainOf(how.steps());
            long[] same = new long[records.rows()];
            java.util.Arrays.fill(same, seed);
            BoundEvaluator.Result r = BoundEvaluator.exact(c, x, records.rows(), 0L, same, engine.drawPlan(how, c),
                    engine.parts().options().threads());
            double[] nats = new double[records.rows()];
            for (int i = 0; i < nats.length; i++) {
                nats[i] = r.continuous[i] + r.binary[i];
            }
            return engine.standardizedNats(nats);   // as every other score: the caller's standardized space
        }
        Chain c = how.sampled() ? engine.chain() : engine.chainOf(how.steps());
        int draws = how.sampled() ? Math.min(how.draws(), engine.steps()) : 0;
        return engine.standardizedNats(
                CommonNoiseBound.bound(c, x, records.rows(), draws, seed, engine.parts().options().threads()));
    }
}
