package org.backstep.bench.quality;

import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Set;

/** Strict "--name value" parsing shared by the quality measurements: unknown names and missing values are refused. */
final class Options {

    private Options() {
    }

    /**
     * Reads "--name value" pairs.
     *
     * @param args the command line
     * @param names the accepted option names, each taking one value
     * @return the values by option name, in the order given
     * @throws IllegalArgumentException for an unknown name, a stray value or an option without value
     */
    static Map<String, String> parse(String[] args, Set<String> names) {
        Map<String, String> out = new LinkedHashMap<>();
        for (int i = 0; i < args.length; i++) {
            String a = args[i];
            if (!a.startsWith("--")) {
                throw new IllegalArgumentException("argument " + (i + 1) + " is '" + a + "'; expected an option --NAME");
            }
            if (!names.contains(a)) {
                throw new IllegalArgumentException("unknown option " + a + "; accepted: " + String.join(" ", names));
            }
            if (i + 1 >= args.length) {
                throw new IllegalArgumentException("option " + a + " has no value");
            }
            out.put(a, args[++i]);
        }
        return out;
    }
}
