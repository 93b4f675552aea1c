package org.backstep.examples;

import org.backstep.table.TableFormatException;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * The skeleton every example command shares: its usage text, made from the {@link Option}s it
 * accepts; the parsing of its arguments into {@link Settings}; and {@link #run} and {@link #main}
 * with one set of exit codes: 0 when done (or for --help), 1 for a failure while running (a bad
 * file, a bad table, a model that cannot be fitted), 2 for bad arguments. Every message starts with
 * the command's name; a usage error points to --help and prints no stack trace.
 */
final class Command {

    /**
     * A bad argument found only once the command has read its table (a column an option names that
     * the table lacks, say): reported as a usage error, exit code 2, before any work starts.
     */
    static final class UsageError extends IllegalArgumentException {
        private static final long serialVersionUID = 1L;

        UsageError(String message) {
            super(message);
        }
    }

    /** What a command does once its arguments are read. */
    @FunctionalInterface
    interface Action {
        /**
         * @param settings the parsed arguments
         * @param out where the command's figures go
         * @throws IOException if a file cannot be read or written
         * @throws TableFormatException if a CSV file is malformed
         */
        void execute(Settings settings, PrintStream out) throws IOException, TableFormatException;
    }

    /** Usage lines are wrapped at this width (common practice, no source: an 80- to 100-column terminal). */
    static final int WIDTH = 100;
    /** Where the help text of each option starts in the usage. */
    private static final int HELP_COLUMN = 27;

    private final String name;
    private final String arguments;
    private final List<String> fileNames;
    private final int requiredFiles;
    private final String description;
    private final List<Option> options;
    private final Action action;

    /**
     * @param name the command's name, as in {@code examples/NAME}
     * @param fileNames the file arguments' placeholders, in order (e.g. "MODEL.backstep", "HELD_OUT.csv")
     * @param requiredFiles how many of them must be given (the rest are optional)
     * @param description what the command does, a paragraph
     * @param options the options it accepts, in the order --help lists them (--help is added)
     * @param action what it does
     */
    Command(String name, List<String> fileNames, int requiredFiles, String description, List<Option> options, Action action) {
        this.name = name;
        this.fileNames = List.copyOf(fileNames);
        this.requiredFiles = requiredFiles;
        this.description = description;
        List<Option> all = new ArrayList<>(options);
        all.add(Option.HELP);
        this.options = List.copyOf(all);
        this.action = action;
        StringBuilder a = new StringBuilder("[options]");
        for (int i = 0; i < fileNames.size(); i++) {
            a.append(' ').append(i < requiredFiles ? fileNames.get(i) : "[" + fileNames.get(i) + "]");
        }
        this.arguments = a.toString();
    }

    /** @return the options this command accepts, --help last */
    List<Option> options() {
        return options;
    }

    /** @return the text of --help */
    String usage() {
        StringBuilder u = new StringBuilder("Usage: examples/" + name + " " + arguments + "\n\n");
        u.append(wrap(description, "", 0)).append("\nOptions:\n");
        for (Option o : options) {
            String head = "  " + (o.value == null ? o.name : o.name + " " + o.value);
            if (head.length() < HELP_COLUMN - 1) {
                u.append(wrap(o.help, head + " ".repeat(HELP_COLUMN - head.length()), HELP_COLUMN));
            } else {
                u.append(head).append('\n').append(wrap(o.help, " ".repeat(HELP_COLUMN), HELP_COLUMN));
            }
        }
        return u.toString().stripTrailing();
    }

    /**
     * Wraps text at {@link #WIDTH}: the first line starts with {@code first}, the others with
     * {@code indent} spaces; every line ends in a newline.
     */
    static String wrap(String text, String first, int indent) {
        StringBuilder out = new StringBuilder();
        StringBuilder line = new StringBuilder(first);
        int start = first.length();
        for (String word : text.split(" ")) {
            if (line.length() > start && line.length() + 1 + word.length() > WIDTH) {
                out.append(line).append('\n');
                line = new StringBuilder(" ".repeat(indent));
                start = indent;
            }
            if (line.length() > start) {
                line.append(' ');
            }
            line.append(word);
        }
        return out.append(line).append('\n').toString();
    }

    /**
     * Reads the arguments: options this command accepts, then its file arguments, which must exist.
     *
     * @param args the command line
     * @return the settings
     * @throws IllegalArgumentException naming the bad argument
     */
    Settings parse(String[] args) {
        Settings s = new Settings();
        List<String> files = new ArrayList<>();
        for (int i = 0; i < args.length; i++) {
            String a = args[i];
            if (a.equals("-h")) {
                a = Option.HELP.name;
            }
            if (a.startsWith("-")) {
                Option o = option(a);
                String value = null;
                if (o.value != null) {
                    if (i + 1 >= args.length) {
                        throw new IllegalArgumentException(a + " needs a value (" + o.value + ")");
                    }
                    value = args[++i];
                }
                o.apply(s, value);
            } else {
                files.add(a);
            }
        }
        if (s.help) {
            return s;
        }
        if (files.size() < requiredFiles || files.size() > fileNames.size()) {
            throw new IllegalArgumentException("expected " + arguments.replace("[options] ", "") + ", got "
                    + (files.isEmpty() ? "no file" : String.join(" ", files)));
        }
        for (String f : files) {
            if (!Files.isRegularFile(Path.of(f))) {
                throw new IllegalArgumentException("no such file: " + f);
            }
            s.files.add(Path.of(f));
        }
        if (s.secondsGiven && s.updates > 0) {
            throw new IllegalArgumentException("--seconds and --updates both given; choose one budget");
        }
        return s;
    }

    private Option option(String name) {
        for (Option o : options) {
            if (o.name.equals(name)) {
                return o;
            }
        }
        throw new IllegalArgumentException("unknown option " + name);
    }

    /**
     * Runs the command; returns the exit code instead of exiting.
     *
     * @param args the arguments
     * @param out where figures (and --help) go
     * @param err where errors go
     * @return 0 when done, 1 for a failure while running, 2 for bad arguments
     */
    int run(String[] args, PrintStream out, PrintStream err) {
        Settings s;
        try {
            s = parse(args);
        } catch (IllegalArgumentException e) {
            err.println(name + ": " + e.getMessage());
            err.println("Run examples/" + name + " --help for the options.");
            return 2;
        }
        if (s.help) {
            out.println(usage());
            return 0;
        }
        try {
            action.execute(s, out);
            return 0;
        } catch (UsageError e) {
            err.println(name + ": " + e.getMessage());
            err.println("Run examples/" + name + " --help for the options.");
            return 2;
        } catch (NoSuchFileException e) {
            err.println(name + ": no such file: " + e.getFile());
            return 1;
        } catch (TableFormatException | IOException | IllegalArgumentException | IllegalStateException e) {
            err.println(name + ": " + e.getMessage());
            return 1;
        }
    }

    /** Runs the command with the process's streams and exits with its code when that is not 0. */
    void main(String[] args) {
        int code = run(args, System.out, System.err);
        if (code != 0) {
            System.exit(code);
        }
    }
}
