package org.backstep.spark;

import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;

import org.apache.spark.api.java.function.MapPartitionsFunction;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.backstep.DiffusionModel;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * Draws synthetic rows in a partition: partition p of P draws rows {@code firstOf(p)} onwards,
 * {@code count / P} of them (one more for the first {@code count % P} partitions), in slices of at
 * most {@code sliceRows} rows; row i (of the whole sample) draws from its own seed
 * {@link RowSeeds#ofKey(long, long)}(seed, i) through the core's per-record-seed sampler. The rows
 * depend on the seed and the count only, not on the partition count or the slice size (to the
 * float32 network's rounding). The input holds one long per partition: its index.
 */
final class SampleJob implements MapPartitionsFunction<Long, Row> {

    private static final long serialVersionUID = 1L;

    private final Broadcast<byte[]> modelBytes;
    private final String sha256;
    private final long count;
    private final int partitions;
    private final long seed;
    private final int sliceRows;

    SampleJob(Broadcast<byte[]> modelBytes, String sha256, long count, int partitions, long seed, int sliceRows) {
        this.modelBytes = modelBytes;
        this.sha256 = sha256;
        this.count = count;
        this.partitions = partitions;
        this.seed = seed;
        this.sliceRows = sliceRows;
    }

    /** @return the number of rows partition p draws */
    static long rowsOf(long count, int partitions, int p) {
        return count / partitions + (p < count % partitions ? 1 : 0);
    }

    /** @return the index (in the whole sample) of partition p's first row */
    static long firstOf(long count, int partitions, int p) {
        return (count / partitions) * p + Math.min(p, count % partitions);
    }

    /**
     * @return the DataFrame type of a sampled cell: a label, a whole number (long) for an INTEGER
     *     column, or a double
     */
    static DataType sampledCellType(ColumnKind kind) {
        return switch (kind) {
            case CATEGORICAL -> DataTypes.StringType;
            case INTEGER -> DataTypes.LongType;
            default -> DataTypes.DoubleType;
        };
    }

    @Override
    public Iterator<Row> call(Iterator<Long> indices) {
        int cpus = TaskThreads.taskCpus();
        DiffusionModel model = ExecutorModels.get(sha256, modelBytes::value, cpus);
        List<ColumnKind> kinds = CoreCalls.kinds(model);
        List<Row> out = new ArrayList<>();
        while (indices.hasNext()) {
            int p = Math.toIntExact(indices.next());
            long n = rowsOf(count, partitions, p);
            long first = firstOf(count, partitions, p);
            int slices = Math.toIntExact((n + sliceRows - 1) / sliceRows);
            Table[] drawn = new Table[slices];
            TaskThreads.forEach(slices, cpus, s -> {
                int m = (int) Math.min(sliceRows, n - (long) s * sliceRows);
                long[] seeds = new long[m];
                for (int r = 0; r < m; r++) {
                    seeds[r] = RowSeeds.ofKey(seed, first + (long) s * sliceRows + r);
                }
                drawn[s] = CoreCalls.sample(model, seeds);
            });
            for (Table t : drawn) {
                for (int r = 0; r < t.rows(); r++) {
                    Object[] v = new Object[t.columns()];
                    for (int j = 0; j < v.length; j++) {
                        v[j] = switch (kinds.get(j)) {
                            case CATEGORICAL -> t.label(r, j);
                            case INTEGER -> (long) t.get(r, j);
                            default -> t.get(r, j);
                        };
                    }
                    out.add(RowFactory.create(v));
                }
            }
        }
        return out.iterator();
    }
}
