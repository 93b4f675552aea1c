package org.backstep.examples.fleet;

import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.commons.math3.random.RandomGenerator;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.schedule.Require;
import org.backstep.table.ColumnKind;

/**
 * Invented telemetry of a fleet of refrigerated shipping containers ("reefers"), for
 * demonstrations only. <b>The data are made up by the formulas below; they are not measurements
 * and no constant is taken from a measured reefer.</b> The constants were chosen to look
 * plausible; there is no published source to cite.
 *
 * <p>Each container records one row every {@value #INTERVAL_MINUTES} minutes
 * ({@value #READINGS_PER_DAY} rows a day) with the columns, in this order:
 * {@code supply_air_c, return_air_c, ambient_c, humidity_pct, compressor_a, door_open, defrost,
 * door_openings, alarm_code}; door_open and defrost are binary (0 or 1), door_openings an integer
 * count, alarm_code categorical ({@link #ALARM_CODES}). Rows are ordered container by container,
 * reading by reading.
 * Usage: {@code ReeferFleet.generate(ReeferFleet.options().withContainers(20))}.
 *
 * <h2>Per container c (drawn once)</h2>
 * <pre>
 *   cargo and setpoint s_c:  frozen   s = -18 C   round(0.45 n) containers
 *                            tropical s = +13 C   round(0.20 n) containers (banana-like produce)
 *                            chilled  s =  +4 C   the rest
 *                            (counts fixed, containers assigned by a seeded shuffle; the three
 *                             setpoints make the table multimodal)
 *   controller offset        b_c ~ N(0, 0.3^2) C
 *   route offset             r_c ~ U[-8, 10] C
 *   local-time offset        z_c ~ U{-6, ..., 6} hours
 *   humidity offset          u_c ~ N(0, 2^2) percentage points
 *   compressor efficiency    e_c ~ U[0.92, 1.08]
 *   defrost interval         D = 24 readings (6 h) frozen, D = 36 readings (9 h) chilled and tropical
 *   defrost phase            phi_c ~ U{0, ..., D - 1}
 * </pre>
 *
 * <h2>Per reading k = 0, 1, ... of container c</h2>
 * The time is 15 k minutes after midnight; the local hour is h_k = (15 k / 60 + z_c) mod 24.
 * <pre>
 *   weather      w_k = 0.97 w_{k-1} + N(0, 0.25^2),  w_0 ~ N(0, 0.25^2 / (1 - 0.97^2))  (AR(1))
 *   true ambient A_k = 22 + r_c + 5 sin(2 pi (h_k - 9) / 24) + w_k            (warmest at 15:00)
 *   defrost      d_k = 1 on readings phi_c + m D, ..., phi_c + m D + L_m - 1  (m = 0, 1, ...),
 *                      L_m ~ U{2, 3} readings (30 or 45 minutes), else 0
 *   door         o_k: a closed door opens with probability 0.004 per reading and stays open
 *                      U{1, 2} readings (15 or 30 minutes)
 *   load         g_k = max(0, A_k - s_c)
 *   delta-T      T_k = 0.6 + 0.05 (A_k - s_c)     (return minus supply grows with ambient minus setpoint)
 *
 *   ambient_c    = A_k + N(0, 0.4^2)
 *   supply_air_c = s_c + b_c + 5.0 d_k + N(0, 0.2^2)
 *   return_air_c = s_c + b_c + T_k + 1.0 d_k + o_k (2.0 + 0.2 g_k) + N(0, 0.25^2)
 *   compressor_a = (1 - d_k) e_c (3.0 + 0.10 A_k + 0.12 g_k) + d_k 1.5 + N(0, 0.3^2)
 *   humidity_pct = clip(H_cargo + u_c + 4 d_k + 8 o_k + N(0, 1.5^2), 0, 100),
 *                  H_cargo = 70 frozen, 88 chilled, 92 tropical
 *   door_open    = o_k,  defrost = d_k
 * </pre>
 * So: supply air sits near the setpoint and is lifted 5 C while the defrost heaters run; return air
 * is warmer than supply by a load-dependent amount, 1 C more during defrost, and is lifted by
 * 2 C + 0.2 (ambient - setpoint) while the door is open; the compressor current rises with ambient
 * temperature and load and drops to an idle 1.5 A during defrost; humidity is high for chilled and
 * lower for frozen cargo, and rises with melt water during defrost and with outside air at an open door.
 *
 * <h2>Faults</h2>
 * round(faultyShare n) containers, chosen by a seeded shuffle, get one fault each; the kinds go
 * round {@link FaultKind#DRIFTING_SENSOR}, {@link FaultKind#STUCK_SENSOR},
 * {@link FaultKind#FAILING_COMPRESSOR}, {@link FaultKind#CROSSED_HUMIDITY} from a seeded starting
 * kind, so they are balanced. With N
 * readings per container, the window has W ~ U{N/4, ..., N/2} readings and starts at
 * k0 ~ U{N/8, ..., N - W}. With j = k - k0 = 0, ..., W - 1 inside the window:
 * <pre>
 *   DRIFTING_SENSOR     return_air_c += 0.04 (j + 1)                 (the sensor only)
 *   STUCK_SENSOR        supply_air_c  = supply_air_c at j = 0          (the sensor only)
 *   FAILING_COMPRESSOR  supply_air_c += 0.015 (j + 1),  return_air_c += 0.015 (j + 1)  (the air warms)
 *                       compressor_a *= 1 + p (j + 1) / W  on rows with d_k = 0,  p ~ U[0.30, 0.60]
 *   CROSSED_HUMIDITY    humidity_pct += 18 (frozen), -18 (chilled, tropical), clipped to [0, 100]  (the sensor only)
 * </pre>
 * The first three are slow or frozen: one reading of them looks normal until the fault has grown,
 * so a model of single rows sees only their far end. CROSSED_HUMIDITY is visible in every reading,
 * yet only in the relation between columns: 18 = H_chilled - H_frozen moves the humidity to the
 * level of the other kind of cargo, a value the column takes every day elsewhere in the fleet, while
 * the temperatures still say which cargo the box holds; a check of each column against its own
 * range cannot see it.
 * Only rows inside the window carry the fault's label; every other row is {@link FaultKind#NONE}.
 *
 * <h2>Counts and codes (after the faults)</h2>
 * Drawn from a stream of their own, from the readings with their faults, so that the seven columns
 * above are the same bit for bit whether these two exist or not. With u_k = 1 where a door opening
 * starts at reading k (o_k = 1, o_{k-1} = 0) and the hour of readings k-3..k of the same container:
 * <pre>
 *   door_openings = sum of u over the hour + Poisson(lambda),  lambda = 0.6 chilled and tropical
 *                   (produce is inspected), 0.2 frozen: openings per hour, short ones included that
 *                   no 15-minute reading catches; at least 1 whenever door_open = 1
 *   alarm_code    = "sensor-fault"     on a STUCK_SENSOR row from its 9th reading on, with probability 0.5,
 *                                      and on any row with probability 0.002 (false alarms)
 *                   else "high-temp"   when return_air_c exceeds the setpoint by more than 4 C
 *                                      (an open door under load, a drifting sensor, a failing compressor)
 *                   else "defrost-timeout" on the last reading of a defrost of 3 readings, with probability 0.5
 *                   else "none"
 * </pre>
 *
 * <h2>Missing cells</h2>
 * Each cell of every column is independently missing with probability missingShare (missing
 * completely at random); missing cells are NaN in {@link Telemetry#cells()} and keep their value
 * in {@link Telemetry#truth()}. The cells of door_openings and alarm_code are blanked from a stream
 * of their own, so the blanks of the seven columns above do not move.
 *
 * <h2>Randomness</h2>
 * A {@link SplittableRandom} seeded with the seed hands out one seed each to the fleet draws, the
 * fault draws, the missing-cell draws and, in order, each container's readings; every stream is a
 * commons-math3 {@link Well19937c} (Gaussians from its {@code nextGaussian}), and the daily cycle
 * uses {@link StrictMath}, so the same options give bit-identical output on every JVM. Faults and
 * missing cells draw from their own streams and are applied after the readings, so changing
 * faultyShare or missingShare leaves every other cell bit for bit as it was.
 *
 * <p>One file of more than 400 lines: the invented fleet's physics, faults and options are one generator, read top to bottom.
 */
public final class ReeferFleet {

    /** Minutes between two readings of a container. */
    public static final int INTERVAL_MINUTES = 15;
    /** Readings of a container per day, 24 * 60 / {@link #INTERVAL_MINUTES}. */
    public static final int READINGS_PER_DAY = 24 * 60 / INTERVAL_MINUTES;

    /** Column index of {@code supply_air_c}. */
    public static final int SUPPLY_AIR = 0;
    /** Column index of {@code return_air_c}. */
    public static final int RETURN_AIR = 1;
    /** Column index of {@code ambient_c}. */
    public static final int AMBIENT = 2;
    /** Column index of {@code humidity_pct}. */
    public static final int HUMIDITY = 3;
    /** Column index of {@code compressor_a}. */
    public static final int COMPRESSOR = 4;
    /** Column index of {@code door_open} (binary). */
    public static final int DOOR_OPEN = 5;
    /** Column index of {@code defrost} (binary). */
    public static final int DEFROST = 6;

    /** Column index of {@code door_openings} (integer: door openings in the hour up to the reading). */
    public static final int DOOR_OPENINGS = 7;
    /** Column index of {@code alarm_code} (categorical: an index into {@link #ALARM_CODES}). */
    public static final int ALARM_CODE = 8;

    /** The column names, in order. */
    public static final List<String> COLUMN_NAMES = List.of(
            "supply_air_c", "return_air_c", "ambient_c", "humidity_pct", "compressor_a", "door_open", "defrost",
            "door_openings", "alarm_code");
    /** Whether each column is binary (0 or 1), in the order of {@link #COLUMN_NAMES}. */
    public static final List<Boolean> BINARY_COLUMNS = List.of(false, false, false, false, false, true, true, false, false);
    /** The kind of each column, in the order of {@link #COLUMN_NAMES}. */
    public static final List<ColumnKind> COLUMN_KINDS = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
            ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY, ColumnKind.BINARY,
            ColumnKind.INTEGER, ColumnKind.CATEGORICAL);
    /** The labels of alarm_code; a cell holds the index of its label. */
    public static final List<String> ALARM_CODES = List.of("none", "high-temp", "defrost-timeout", "sensor-fault");
    /** Index of "none" in {@link #ALARM_CODES}. */
    public static final int ALARM_NONE = 0;
    /** Index of "high-temp" in {@link #ALARM_CODES}. */
    public static final int ALARM_HIGH_TEMP = 1;
    /** Index of "defrost-timeout" in {@link #ALARM_CODES}. */
    public static final int ALARM_DEFROST_TIMEOUT = 2;
    /** Index of "sensor-fault" in {@link #ALARM_CODES}. */
    public static final int ALARM_SENSOR_FAULT = 3;

    /** Default number of containers. */
    public static final int DEFAULT_CONTAINERS = 48;
    /** Default length of the run in days. */
    public static final int DEFAULT_DAYS = 3;
    /** Default seed. */
    public static final long DEFAULT_SEED = 2026L;
    /** Default share of containers with a fault. */
    public static final double DEFAULT_FAULTY_SHARE = 0.125;
    /** Default share of cells that are missing. */
    public static final double DEFAULT_MISSING_SHARE = 0.05;
    /** Largest number of rows (containers * days * {@link #READINGS_PER_DAY}) one call may make. */
    public static final int MAX_ROWS = 2_000_000;

    // ---------------------------------------------------------------- constants of the scenario
    // Invented; each one appears in the class Javadoc, which must be changed with it.

    static final double SETPOINT_FROZEN_C = -18.0;
    static final double SETPOINT_CHILLED_C = 4.0;
    static final double SETPOINT_TROPICAL_C = 13.0;
    static final double SHARE_FROZEN = 0.45;
    static final double SHARE_TROPICAL = 0.20;

    static final double CONTROLLER_OFFSET_SD_C = 0.3;
    static final double ROUTE_OFFSET_MIN_C = -8.0;
    static final double ROUTE_OFFSET_MAX_C = 10.0;
    static final int LOCAL_TIME_OFFSET_MAX_HOURS = 6;
    static final double HUMIDITY_OFFSET_SD = 2.0;
    static final double EFFICIENCY_MIN = 0.92;
    static final double EFFICIENCY_MAX = 1.08;

    static final double AMBIENT_MEAN_C = 22.0;
    static final double AMBIENT_DAILY_AMPLITUDE_C = 5.0;
    static final double AMBIENT_WARMEST_HOUR = 15.0;
    static final double WEATHER_AR = 0.97;
    static final double WEATHER_INNOVATION_SD_C = 0.25;
    static final double AMBIENT_SENSOR_SD_C = 0.4;

    static final int DEFROST_INTERVAL_FROZEN = 24;
    static final int DEFROST_INTERVAL_CHILLED = 36;
    static final int DEFROST_MIN_READINGS = 2;
    static final int DEFROST_MAX_READINGS = 3;
    static final double DOOR_OPEN_PROBABILITY = 0.004;
    static final int DOOR_MAX_READINGS = 2;

    static final double DELTA_T_BASE_C = 0.6;
    static final double DELTA_T_PER_DEGREE = 0.05;
    static final double SUPPLY_SENSOR_SD_C = 0.2;
    static final double RETURN_SENSOR_SD_C = 0.25;
    static final double DEFROST_SUPPLY_LIFT_C = 5.0;
    static final double DEFROST_RETURN_LIFT_C = 1.0;
    static final double DOOR_RETURN_LIFT_C = 2.0;
    static final double DOOR_RETURN_LIFT_PER_DEGREE = 0.2;

    static final double CURRENT_BASE_A = 3.0;
    static final double CURRENT_PER_AMBIENT_DEGREE_A = 0.10;
    static final double CURRENT_PER_LOAD_DEGREE_A = 0.12;
    static final double CURRENT_IDLE_A = 1.5;
    static final double CURRENT_SD_A = 0.3;

    static final double HUMIDITY_FROZEN = 70.0;
    static final double HUMIDITY_CHILLED = 88.0;
    static final double HUMIDITY_TROPICAL = 92.0;
    static final double HUMIDITY_DEFROST_LIFT = 4.0;
    static final double HUMIDITY_DOOR_LIFT = 8.0;
    static final double HUMIDITY_SD = 1.5;

    static final double DRIFT_PER_READING_C = 0.04;
    static final double CREEP_PER_READING_C = 0.015;
    static final double CURRENT_RISE_MIN = 0.30;
    static final double CURRENT_RISE_MAX = 0.60;

    static final double SHORT_OPENINGS_PRODUCE_PER_HOUR = 0.6;
    static final double SHORT_OPENINGS_FROZEN_PER_HOUR = 0.2;
    static final int STUCK_NOTICED_AFTER_READINGS = 8;
    static final double STUCK_ALARM_PROBABILITY = 0.5;
    static final double FALSE_SENSOR_ALARM_PROBABILITY = 0.002;
    static final double HIGH_TEMP_MARGIN_C = 4.0;
    static final double DEFROST_TIMEOUT_PROBABILITY = 0.5;

    private static final int COLUMNS = 9;
    /** The columns drawn per reading by the physics; the counts and codes follow them. */
    private static final int MEASURED_COLUMNS = 7;

    private ReeferFleet() {
    }

    /**
     * The options of a run; immutable, changed by the {@code with...} methods, validated on
     * construction. Defaults come from {@link ReeferFleet#options()}.
     *
     * @param containers number of containers, from 1; default {@link ReeferFleet#DEFAULT_CONTAINERS}
     * @param days length of the run in whole days, from 1; default {@link ReeferFleet#DEFAULT_DAYS}
     * @param seed seed of every random draw; default {@link ReeferFleet#DEFAULT_SEED}
     * @param faultyShare share of containers given a fault, in [0, 1], rounded to a whole count;
     *        default {@link ReeferFleet#DEFAULT_FAULTY_SHARE}
     * @param missingShare probability that a cell is missing, in [0, 1); default
     *        {@link ReeferFleet#DEFAULT_MISSING_SHARE}
     */
    public record Options(int containers, int days, long seed, double faultyShare, double missingShare) {

        /**
         * Validates the options.
         *
         * @param containers number of containers, from 1
         * @param days length of the run in days, from 1
         * @param seed seed of every random draw
         * @param faultyShare share of faulty containers, in [0, 1]
         * @param missingShare probability that a cell is missing, in [0, 1)
         * @throws IllegalArgumentException naming the option, its value and what was expected
         */
        public Options {
            Require.atLeast("containers", containers, 1);
            Require.atLeast("days", days, 1);
            long rows = (long) containers * days * READINGS_PER_DAY;
            if (rows > MAX_ROWS) {
                throw new IllegalArgumentException("containers * days * " + READINGS_PER_DAY + " is " + rows
                        + " (containers " + containers + ", days " + days + "); expected at most " + MAX_ROWS);
            }
            Require.inClosed("faultyShare", faultyShare, 0.0, 1.0);
            if (!(missingShare >= 0.0 && missingShare < 1.0)) {
                throw new IllegalArgumentException("missingShare is " + missingShare + "; expected a number in [0, 1)");
            }
        }

        /**
         * @param value the number of containers, from 1
         * @return these options with {@code containers} replaced
         */
        public Options withContainers(int value) {
            return new Options(value, days, seed, faultyShare, missingShare);
        }

        /**
         * @param value the length of the run in days, from 1
         * @return these options with {@code days} replaced
         */
        public Options withDays(int value) {
            return new Options(containers, value, seed, faultyShare, missingShare);
        }

        /**
         * @param value the seed
         * @return these options with {@code seed} replaced
         */
        public Options withSeed(long value) {
            return new Options(containers, days, value, faultyShare, missingShare);
        }

        /**
         * @param value the share of faulty containers, in [0, 1]
         * @return these options with {@code faultyShare} replaced
         */
        public Options withFaultyShare(double value) {
            return new Options(containers, days, seed, value, missingShare);
        }

        /**
         * @param value the probability that a cell is missing, in [0, 1)
         * @return these options with {@code missingShare} replaced
         */
        public Options withMissingShare(double value) {
            return new Options(containers, days, seed, faultyShare, value);
        }

        /** @return minutes between two readings, always {@link ReeferFleet#INTERVAL_MINUTES} */
        public int intervalMinutes() {
            return INTERVAL_MINUTES;
        }

        /** @return readings per container, {@code days * READINGS_PER_DAY} */
        public int readingsPerContainer() {
            return days * READINGS_PER_DAY;
        }

        /** @return the number of rows, {@code containers * readingsPerContainer()} */
        public int rows() {
            return containers * readingsPerContainer();
        }

        /** @return the number of faulty containers, {@code round(faultyShare * containers)} */
        public int faultyContainers() {
            return (int) Math.round(faultyShare * containers);
        }
    }

    /**
     * The default options: {@value #DEFAULT_CONTAINERS} containers, {@value #DEFAULT_DAYS} days,
     * seed {@value #DEFAULT_SEED}, faulty share {@value #DEFAULT_FAULTY_SHARE}, missing share
     * {@value #DEFAULT_MISSING_SHARE}.
     *
     * @return the default options
     */
    public static Options options() {
        return new Options(DEFAULT_CONTAINERS, DEFAULT_DAYS, DEFAULT_SEED, DEFAULT_FAULTY_SHARE, DEFAULT_MISSING_SHARE);
    }

    /**
     * Generates the telemetry of the fleet by the model in the class documentation.
     *
     * @param options the options (not modified)
     * @return the telemetry; the same options give bit-identical telemetry
     * @throws IllegalArgumentException if {@code options} is null
     */
    public static Telemetry generate(Options options) {
        Require.notNull("options", options);
        int n = options.containers();
        int perContainer = options.readingsPerContainer();
        int rows = options.rows();

        SplittableRandom master = new SplittableRandom(options.seed());
        RandomGenerator fleetRng = new Well19937c(master.nextLong());
        RandomGenerator faultRng = new Well19937c(master.nextLong());
        RandomGenerator missingRng = new Well19937c(master.nextLong());
        long[] containerSeeds = new long[n];
        for (int c = 0; c < n; c++) {
            containerSeeds[c] = master.nextLong();
        }

        Cargo[] cargo = assignCargo(n, fleetRng);
        double[] setpoint = new double[n];
        double[][] truth = new double[rows][];
        int[] container = new int[rows];
        int[] readingIndex = new int[rows];
        for (int c = 0; c < n; c++) {
            Unit unit = Unit.draw(cargo[c], fleetRng);
            setpoint[c] = unit.cargo.setpoint;
            double[][] block = readings(unit, perContainer, new Well19937c(containerSeeds[c]));
            for (int k = 0; k < perContainer; k++) {
                int row = c * perContainer + k;
                truth[row] = block[k];
                container[row] = c;
                readingIndex[row] = k;
            }
        }

        FaultKind[] fault = new FaultKind[rows];
        Arrays.fill(fault, FaultKind.NONE);
        injectFaultsInPlace(truth, fault, setpoint, options, faultRng);
        // drawn after every other seed, so that the streams above are as they were before these columns
        RandomGenerator codeRng = new Well19937c(master.nextLong());
        RandomGenerator codeMissingRng = new Well19937c(master.nextLong());
        countsAndCodesInPlace(truth, fault, setpoint, perContainer, codeRng);

        double[][] cells = new double[rows][];
        double p = options.missingShare();
        for (int r = 0; r < rows; r++) {
            cells[r] = truth[r].clone();
            for (int j = 0; j < MEASURED_COLUMNS; j++) {
                if (missingRng.nextDouble() < p) {
                    cells[r][j] = Double.NaN;
                }
            }
            for (int j = MEASURED_COLUMNS; j < COLUMNS; j++) {
                if (codeMissingRng.nextDouble() < p) {
                    cells[r][j] = Double.NaN;
                }
            }
        }
        return new Telemetry(COLUMN_NAMES, BINARY_COLUMNS, cells, truth, container, readingIndex, fault, setpoint,
                options);
    }

    // ---------------------------------------------------------------- the model

    /** The three kinds of cargo, with setpoint, humidity level and defrost interval. */
    private enum Cargo {
        FROZEN(SETPOINT_FROZEN_C, HUMIDITY_FROZEN, DEFROST_INTERVAL_FROZEN),
        CHILLED(SETPOINT_CHILLED_C, HUMIDITY_CHILLED, DEFROST_INTERVAL_CHILLED),
        TROPICAL(SETPOINT_TROPICAL_C, HUMIDITY_TROPICAL, DEFROST_INTERVAL_CHILLED);

        final double setpoint;
        final double humidity;
        final int defrostInterval;

        Cargo(double setpoint, double humidity, int defrostInterval) {
            this.setpoint = setpoint;
            this.humidity = humidity;
            this.defrostInterval = defrostInterval;
        }
    }

    /** The per-container draws of the class documentation. */
    private record Unit(Cargo cargo, double offset, double route, int localHours, double humidityOffset,
                        double efficiency, int defrostPhase) {

        static Unit draw(Cargo cargo, RandomGenerator rng) {
            double offset = CONTROLLER_OFFSET_SD_C * rng.nextGaussian();
            double route = uniform(rng, ROUTE_OFFSET_MIN_C, ROUTE_OFFSET_MAX_C);
            int localHours = -LOCAL_TIME_OFFSET_MAX_HOURS + rng.nextInt(2 * LOCAL_TIME_OFFSET_MAX_HOURS + 1);
            double humidityOffset = HUMIDITY_OFFSET_SD * rng.nextGaussian();
            double efficiency = uniform(rng, EFFICIENCY_MIN, EFFICIENCY_MAX);
            int phase = rng.nextInt(cargo.defrostInterval);
            return new Unit(cargo, offset, route, localHours, humidityOffset, efficiency, phase);
        }
    }

    /** Fixed counts of each cargo, assigned to containers by a Fisher-Yates shuffle. */
    private static Cargo[] assignCargo(int n, RandomGenerator rng) {
        int frozen = (int) Math.round(SHARE_FROZEN * n);
        int tropical = Math.min(n - frozen, (int) Math.round(SHARE_TROPICAL * n));
        Cargo[] cargo = new Cargo[n];
        for (int c = 0; c < n; c++) {
            cargo[c] = c < frozen ? Cargo.FROZEN : c < frozen + tropical ? Cargo.TROPICAL : Cargo.CHILLED;
        }
        int[] order = permutation(n, rng);
        Cargo[] shuffled = new Cargo[n];
        for (int c = 0; c < n; c++) {
            shuffled[c] = cargo[order[c]];
        }
        return shuffled;
    }

    /** The healthy readings of one container, one row of {@value #COLUMNS} cells per reading. */
    private static double[][] readings(Unit unit, int count, RandomGenerator rng) {
        double s = unit.cargo.setpoint;
        int interval = unit.cargo.defrostInterval;
        double weatherSd = WEATHER_INNOVATION_SD_C / Math.sqrt(1.0 - WEATHER_AR * WEATHER_AR);
        double weather = weatherSd * rng.nextGaussian();
        int defrostLeft = 0;
        int doorLeft = 0;
        double[][] out = new double[count][];
        for (int k = 0; k < count; k++) {
            if (k > 0) {
                weather = WEATHER_AR * weather + WEATHER_INNOVATION_SD_C * rng.nextGaussian();
            }
            double hour = ((double) k * INTERVAL_MINUTES / 60.0 + unit.localHours) % 24.0;
            if (hour < 0.0) {
                hour += 24.0;
            }
            // sin(2 pi (h - 9) / 24) peaks where (h - 9) / 24 = 1/4, at the warmest hour 15
            double cycle = StrictMath.sin(2.0 * Math.PI * (hour - (AMBIENT_WARMEST_HOUR - 6.0)) / 24.0);
            double ambient = AMBIENT_MEAN_C + unit.route + AMBIENT_DAILY_AMPLITUDE_C * cycle + weather;
            if (k >= unit.defrostPhase && (k - unit.defrostPhase) % interval == 0) {
                defrostLeft = DEFROST_MIN_READINGS + rng.nextInt(DEFROST_MAX_READINGS - DEFROST_MIN_READINGS + 1);
            }
            if (doorLeft == 0 && rng.nextDouble() < DOOR_OPEN_PROBABILITY) {
                doorLeft = 1 + rng.nextInt(DOOR_MAX_READINGS);
            }
            double d = defrostLeft > 0 ? 1.0 : 0.0;
            double o = doorLeft > 0 ? 1.0 : 0.0;
            double load = Math.max(0.0, ambient - s);
            double deltaT = DELTA_T_BASE_C + DELTA_T_PER_DEGREE * (ambient - s);

            double[] row = new double[COLUMNS];
            row[AMBIENT] = ambient + AMBIENT_SENSOR_SD_C * rng.nextGaussian();
            row[SUPPLY_AIR] = s + unit.offset + DEFROST_SUPPLY_LIFT_C * d + SUPPLY_SENSOR_SD_C * rng.nextGaussian();
            row[RETURN_AIR] = s + unit.offset + deltaT + DEFROST_RETURN_LIFT_C * d
                    + o * (DOOR_RETURN_LIFT_C + DOOR_RETURN_LIFT_PER_DEGREE * load)
                    + RETURN_SENSOR_SD_C * rng.nextGaussian();
            double running = unit.efficiency
                    * (CURRENT_BASE_A + CURRENT_PER_AMBIENT_DEGREE_A * ambient + CURRENT_PER_LOAD_DEGREE_A * load);
            row[COMPRESSOR] = (1.0 - d) * running + d * CURRENT_IDLE_A + CURRENT_SD_A * rng.nextGaussian();
            double humidity = unit.cargo.humidity + unit.humidityOffset + HUMIDITY_DEFROST_LIFT * d
                    + HUMIDITY_DOOR_LIFT * o + HUMIDITY_SD * rng.nextGaussian();
            row[HUMIDITY] = Math.min(100.0, Math.max(0.0, humidity));
            row[DOOR_OPEN] = o;
            row[DEFROST] = d;
            out[k] = row;

            if (defrostLeft > 0) {
                defrostLeft--;
            }
            if (doorLeft > 0) {
                doorLeft--;
            }
        }
        return out;
    }

    /**
     * Picks the faulty containers and windows and changes their rows of {@code truth} by the
     * formulas of the class documentation, labelling them in {@code fault}.
     *
     * @param truth all rows, container by container (modified: the fault windows)
     * @param fault one label per row (modified: the fault windows)
     * @param setpoints the setpoint of each container
     * @param options the options (not modified)
     * @param rng the fault stream (advanced)
     */
    private static void injectFaultsInPlace(double[][] truth, FaultKind[] fault, double[] setpoints, Options options,
                                            RandomGenerator rng) {
        int perContainer = options.readingsPerContainer();
        int[] order = permutation(options.containers(), rng);
        FaultKind[] kinds = {FaultKind.DRIFTING_SENSOR, FaultKind.STUCK_SENSOR, FaultKind.FAILING_COMPRESSOR,
            FaultKind.CROSSED_HUMIDITY};
        int firstKind = rng.nextInt(kinds.length);
        for (int i = 0; i < options.faultyContainers(); i++) {
            int c = order[i];
            FaultKind kind = kinds[(firstKind + i) % kinds.length];
            int minWidth = Math.max(1, perContainer / 4);
            int width = minWidth + rng.nextInt(perContainer / 2 - minWidth + 1);
            int earliest = perContainer / 8;
            int start = earliest + rng.nextInt(perContainer - width - earliest + 1);
            double rise = uniform(rng, CURRENT_RISE_MIN, CURRENT_RISE_MAX);
            int base = c * perContainer + start;
            double stuck = truth[base][SUPPLY_AIR];
            double setpoint = setpoints[c];
            for (int j = 0; j < width; j++) {
                double[] row = truth[base + j];
                fault[base + j] = kind;
                switch (kind) {
                    case DRIFTING_SENSOR -> row[RETURN_AIR] += DRIFT_PER_READING_C * (j + 1);
                    case STUCK_SENSOR -> row[SUPPLY_AIR] = stuck;
                    case FAILING_COMPRESSOR -> {
                        row[SUPPLY_AIR] += CREEP_PER_READING_C * (j + 1);
                        row[RETURN_AIR] += CREEP_PER_READING_C * (j + 1);
                        if (row[DEFROST] == 0.0) {
                            row[COMPRESSOR] *= 1.0 + rise * (j + 1) / width;
                        }
                    }
                    case CROSSED_HUMIDITY -> {
                        double shift = HUMIDITY_CHILLED - HUMIDITY_FROZEN;
                        double h = row[HUMIDITY] + (setpoint < SETPOINT_CHILLED_C ? shift : -shift);
                        row[HUMIDITY] = Math.min(100.0, Math.max(0.0, h));
                    }
                    default -> throw new IllegalStateException("no effect for " + kind);
                }
            }
        }
    }

    /** Fills door_openings and alarm_code of every row from the readings with their faults (see the class comment). */
    private static void countsAndCodesInPlace(double[][] truth, FaultKind[] fault, double[] setpoints, int perContainer,
                                              RandomGenerator rng) {
        for (int r = 0; r < truth.length; r++) {
            int c = r / perContainer;
            int k = r % perContainer;
            double[] row = truth[r];
            int starts = 0;
            for (int q = Math.max(0, k - 3); q <= k; q++) {
                double[] at = truth[c * perContainer + q];
                boolean before = q > 0 && truth[c * perContainer + q - 1][DOOR_OPEN] == 1.0;
                starts += at[DOOR_OPEN] == 1.0 && !before ? 1 : 0;
            }
            double lambda = setpoints[c] == SETPOINT_FROZEN_C ? SHORT_OPENINGS_FROZEN_PER_HOUR : SHORT_OPENINGS_PRODUCE_PER_HOUR;
            row[DOOR_OPENINGS] = starts + poisson(lambda, rng);

            int stuckRun = 0;
            for (int q = k; q >= 0 && fault[c * perContainer + q] == FaultKind.STUCK_SENSOR; q--) {
                stuckRun++;
            }
            boolean stuckAlarm = stuckRun > STUCK_NOTICED_AFTER_READINGS && rng.nextDouble() < STUCK_ALARM_PROBABILITY;
            boolean falseAlarm = rng.nextDouble() < FALSE_SENSOR_ALARM_PROBABILITY;
            boolean lastOfLongDefrost = row[DEFROST] == 1.0 && (k + 1 == perContainer || truth[r + 1][DEFROST] == 0.0)
                    && k >= 2 && truth[r - 1][DEFROST] == 1.0 && truth[r - 2][DEFROST] == 1.0;
            boolean timeout = lastOfLongDefrost && rng.nextDouble() < DEFROST_TIMEOUT_PROBABILITY;
            if (stuckAlarm || falseAlarm) {
                row[ALARM_CODE] = ALARM_SENSOR_FAULT;
            } else if (row[RETURN_AIR] - setpoints[c] > HIGH_TEMP_MARGIN_C) {
                row[ALARM_CODE] = ALARM_HIGH_TEMP;
            } else if (timeout) {
                row[ALARM_CODE] = ALARM_DEFROST_TIMEOUT;
            } else {
                row[ALARM_CODE] = ALARM_NONE;
            }
        }
    }

    /** A Poisson draw by multiplying uniforms (Knuth, TAOCP vol. 2, 3.4.1; fine for a small mean). */
    private static int poisson(double lambda, RandomGenerator rng) {
        double limit = Math.exp(-lambda);
        double product = rng.nextDouble();
        int n = 0;
        while (product > limit) {
            product *= rng.nextDouble();
            n++;
        }
        return n;
    }

    /** A uniformly random permutation of 0..n-1 (Fisher-Yates). */
    private static int[] permutation(int n, RandomGenerator rng) {
        int[] order = new int[n];
        for (int i = 0; i < n; i++) {
            order[i] = i;
        }
        for (int i = n - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = order[i];
            order[i] = order[j];
            order[j] = t;
        }
        return order;
    }

    private static double uniform(RandomGenerator rng, double lo, double hi) {
        return lo + (hi - lo) * rng.nextDouble();
    }
}
