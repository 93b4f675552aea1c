package org.backstep.examples;

import org.backstep.schedule.NoiseSchedule;

/**
 * The README's main-job command. For now it prints the derived per-step table of a chosen
 * schedule; the full demo on container telemetry replaces it.
 */
public final class Demo {

    private Demo() {
    }

    /**
     * Prints the per-step table of the cosine schedule with 50 steps, or of the schedule named by
     * the first argument ({@code linear}, {@code cosine}, {@code binomial}) with the step count of
     * the second.
     *
     * @param args optional kind and step count
     */
    public static void main(String[] args) {
        String kind = args.length > 0 ? args[0] : "cosine";
        int steps = args.length > 1 ? Integer.parseInt(args[1]) : 50;
        NoiseSchedule schedule = switch (kind) {
            case "linear" -> NoiseSchedule.linear(steps);
            case "binomial" -> NoiseSchedule.binomial(steps);
            default -> NoiseSchedule.cosine(steps);
        };
        System.out.println(schedule);
        System.out.print(schedule.toTable());
    }
}
