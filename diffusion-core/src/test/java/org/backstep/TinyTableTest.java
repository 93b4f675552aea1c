package org.backstep;

import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/** The smallest table a fit takes (issue 15): two rows, trained on both, with a note saying so. */
class TinyTableTest {

    @Test
    void aTwoRowTableFitsWithoutCheckpointRows() {
        Table t = Table.of(List.of("a", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS),
                new double[][] {{1, 2}, {3, 5}});
        DiffusionModel m = Backstep.builder().steps(10).hidden(8).epochs(2).seed(3).fit(t);
        // common practice, no source: both rows are trained on, and the note says why there are no checkpoint rows
        assertEquals(2, m.provenance().trainingRows());
        assertEquals(0, m.provenance().checkpointRows());
        assertTrue(m.provenance().notes().stream().anyMatch(n -> n.startsWith("no checkpoint rows")),
                m.provenance().notes().toString());
    }
}
