package org.backstep.spark;

import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;

import org.apache.spark.api.java.function.MapPartitionsFunction;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.backstep.DiffusionModel;
import org.backstep.table.Table;

/**
 * Draws synthetic rows in a partition: partition p of P draws {@code count / P} rows (one more for
 * the first {@code count % P} partitions), in slices of at most {@code sliceRows} rows, slice s
 * from the seed {@link RowSeeds#ofSlice}(seed, p, s). The result depends on the seed, the count and
 * the partition count only. The input holds one long per partition: its index.
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

    @Override
    public Iterator<Row> call(Iterator<Long> indices) {
        int cpus = TaskThreads.taskCpus();
        DiffusionModel model = ExecutorModels.get(sha256, modelBytes::value, cpus);
        List<Row> out = new ArrayList<>();
        while (indices.hasNext()) {
            int p = Math.toIntExact(indices.next());
            long n = rowsOf(count, partitions, p);
            int slices = Math.toIntExact((n + sliceRows - 1) / sliceRows);
            Table[] drawn = new Table[slices];
            TaskThreads.forEach(slices, cpus, s -> {
                int m = (int) Math.min(sliceRows, n - (long) s * sliceRows);
                drawn[s] = CoreCalls.sample(model, m, RowSeeds.ofSlice(seed, p, s));
            });
            for (Table t : drawn) {
                for (int r = 0; r < t.rows(); r++) {
                    double[] row = t.row(r);
                    Object[] v = new Object[row.length];
                    for (int j = 0; j < row.length; j++) {
                        v[j] = row[j];
                    }
                    out.add(RowFactory.create(v));
                }
            }
        }
        return out.iterator();
    }
}
