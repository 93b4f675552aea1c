package consumer;

import org.backstep.option.BoundOptions;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.report.BoundReport;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.util.List;
import java.util.SplittableRandom;

/**
 * A library user's first program: a small table of two correlated readings and a binary flag,
 * fitted for a few seconds, then its bound and a few synthetic rows. Exits with 1 if a figure is not finite.
 */
public final class Main {

    private Main() {
    }

    public static void main(String[] args) {
        SplittableRandom rng = new SplittableRandom(5);
        double[][] rows = new double[200][];
        for (int i = 0; i < rows.length; i++) {
            double supply = -18 + 2 * rng.nextGaussian();
            double ret = supply + 3 + 0.5 * rng.nextGaussian();
            rows[i] = new double[] {supply, ret, rng.nextDouble() < 0.1 ? 1 : 0};
        }
        Table table = Table.of(List.of("supply_c", "return_c", "door_open"),
                List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY), rows);
        DiffusionModel model = Backstep.builder().steps(50).hidden(32, 32).epochs(600).seed(3).fit(table);
        BoundReport bound = model.bound(table, BoundOptions.sampled(4), 7);
        System.out.println("fitted: " + model);
        System.out.println("bound: " + bound.meanNats() + " nats per record");
        System.out.println("samples:\n" + model.sample(3, 11));
        if (!Double.isFinite(bound.meanNats())) {
            System.exit(1);
        }
    }
}
