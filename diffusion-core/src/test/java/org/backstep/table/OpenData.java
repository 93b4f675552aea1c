package org.backstep.table;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.URISyntaxException;
import java.net.URL;
import java.nio.file.Path;

/** The open tables in test resources {@code data/} (see data/SOURCES.md and data/ATTRIBUTION.md). */
final class OpenData {

    private OpenData() {
    }

    /** @return the path of a file in test resources {@code data/} */
    static Path path(String file) {
        URL url = OpenData.class.getResource("/data/" + file);
        if (url == null) {
            throw new IllegalStateException("test resource data/" + file + " is missing");
        }
        try {
            return Path.of(url.toURI());
        } catch (URISyntaxException e) {
            throw new IllegalStateException(e);
        }
    }

    /** @return the file read with the default reader (kinds inferred) */
    static Table read(String file) {
        try {
            return CsvTables.reader().read(path(file));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        } catch (TableFormatException e) {
            throw new IllegalStateException(e);
        }
    }
}
