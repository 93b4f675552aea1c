package org.backstep.spark;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * Invented telemetry of refrigerated containers (not measurements of any real container) and one
 * small model fitted on it, shared by the tests of this JVM: supply and return air temperature,
 * ambient temperature, compressor power, and whether the door is open.
 */
final class TestModels {

    static final List<String> NAMES = List.of("supply_air", "return_air", "ambient", "power_kw", "door_open");
    static final List<ColumnKind> KINDS = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
            ColumnKind.CONTINUOUS, ColumnKind.BINARY);
    /** The row key column of the test DataFrames. */
    static final String KEY = "reading_id";

    private static DiffusionModel model;

    private TestModels() {
    }

    /** @return {@code rows} invented readings, seeded */
    static Table readings(int rows, long seed) {
        SplittableRandom r = new SplittableRandom(seed);
        double[][] x = new double[rows][];
        for (int i = 0; i < rows; i++) {
            double setpoint = r.nextBoolean() ? -18.0 : 2.0;
            double ambient = 25.0 + 6.0 * r.nextGaussian();
            boolean door = r.nextDouble() < 0.1;
            double supply = setpoint + 0.4 * r.nextGaussian() + (door ? 3.0 : 0.0);
            double ret = supply + 1.5 + 0.05 * (ambient - 25.0) + 0.3 * r.nextGaussian();
            double power = 3.0 + 0.08 * (ambient - setpoint) + 0.3 * r.nextGaussian();
            x[i] = new double[] {supply, ret, ambient, power, door ? 1.0 : 0.0};
        }
        return Table.of(NAMES, KINDS, x);
    }

    /** @return a small model of 400 readings (T = 20, two hidden layers of 16), fitted once per JVM */
    static synchronized DiffusionModel model() {
        if (model == null) {
            // standardized maps: JobsTest denoises with this model, and denoising needs them (Marginals Javadoc)
            model = Backstep.builder().steps(20).hidden(16, 16).epochs(30).seed(3).threads(1)
                    .marginals(org.backstep.option.Marginals.STANDARDIZED).fit(readings(400, 11));
        }
        return model;
    }

    /** The schema of {@link #frame}: the key (long), four doubles and a boolean door column. */
    static StructType schema() {
        List<StructField> f = new ArrayList<>();
        f.add(DataTypes.createStructField(KEY, DataTypes.LongType, false));
        for (int j = 0; j < 4; j++) {
            f.add(DataTypes.createStructField(NAMES.get(j), DataTypes.DoubleType, true));
        }
        f.add(DataTypes.createStructField(NAMES.get(4), DataTypes.BooleanType, true));
        return new StructType(f.toArray(StructField[]::new));
    }

    /** The table's rows as a DataFrame with keys 1000 + row index (NaN cells become nulls), in {@code partitions} partitions. */
    static Dataset<Row> frame(Table t, int partitions) {
        List<Row> rows = new ArrayList<>();
        for (int i = 0; i < t.rows(); i++) {
            Object[] v = new Object[6];
            v[0] = 1000L + i;
            for (int j = 0; j < 4; j++) {
                double c = t.get(i, j);
                v[1 + j] = Double.isNaN(c) ? null : c;
            }
            double door = t.get(i, 4);
            v[5] = Double.isNaN(door) ? null : door == 1.0;
            rows.add(RowFactory.create(v));
        }
        return LocalSpark.session().createDataFrame(rows, schema()).repartition(partitions);
    }
}
