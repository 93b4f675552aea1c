package org.backstep.bench.quality;

import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Set;

/**
 * Shared by the quality measurements: strict "--name value" parsing (unknown names and missing values are
 * refused), the process CPU time and the load average they print.
 */
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

    /** @return the CPU time of this process so far, in nanoseconds (HotSpot's OperatingSystemMXBean) */
    static long cpu() {
        return ((com.sun.management.OperatingSystemMXBean) java.lang.management.ManagementFactory
                .getOperatingSystemMXBean()).getProcessCpuTime();
    }

    /** @return /proc/loadavg as read, or "unknown" where there is none */
    static String load() {
        try {
            return java.nio.file.Files.readString(java.nio.file.Path.of("/proc/loadavg"),
                    java.nio.charset.StandardCharsets.US_ASCII).strip();
        } catch (java.io.IOException e) {
            return "unknown";
        }
    }
}
