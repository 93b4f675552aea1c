package org.backstep.examples;

import javax.imageio.ImageIO;
import java.awt.image.BufferedImage;
import java.io.File;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import java.util.concurrent.TimeUnit;

/**
 * Headless Chromium (Debian's package {@code chromium}) for the tests: finds the browser and takes a
 * screenshot of a page, as a person would see it at a given window width.
 */
final class Chromium {

    /** Names the browser goes by on a PATH, in the order tried; the system property backstep.chromium overrides them. */
    static final List<String> NAMES = List.of("chromium", "chromium-browser", "google-chrome");
    /** Seconds a screenshot may take before the browser is stopped (a loaded 2-core machine needs about 10). */
    static final long TIMEOUT_SECONDS = 180;

    private Chromium() {
    }

    /** @return the browser's executable, if there is one */
    static Optional<Path> find() {
        String given = System.getProperty("backstep.chromium");
        if (given != null && !given.isBlank()) {
            return Optional.of(Path.of(given)).filter(Files::isExecutable);
        }
        for (String dir : System.getenv().getOrDefault("PATH", "").split(File.pathSeparator)) {
            for (String name : NAMES) {
                Path p = Path.of(dir.isEmpty() ? "." : dir, name);
                if (Files.isExecutable(p)) {
                    return Optional.of(p);
                }
            }
        }
        return Optional.empty();
    }

    /**
     * Renders {@code page} in a window {@code width} pixels wide and {@code height} high and writes
     * the screenshot to {@code png}, cut below the page's last non-background row. The browser's own
     * messages go to {@code png} with ".log" appended.
     *
     * @return the screenshot as written
     * @throws IOException if the browser fails or gives no readable image
     */
    static BufferedImage screenshot(Path browser, Path page, Path png, int width, int height) throws IOException, InterruptedException {
        Files.createDirectories(png.toAbsolutePath().getParent());
        Path profile = Files.createTempDirectory("backstep-chromium");
        Path raw = png.resolveSibling(png.getFileName() + ".full.png");
        Path log = png.resolveSibling(png.getFileName() + ".log");
        try {
            Process p = new ProcessBuilder(browser.toString(), "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
                    "--no-first-run", "--disable-dev-shm-usage", "--user-data-dir=" + profile,
                    "--window-size=" + width + "," + height, "--screenshot=" + raw.toAbsolutePath(),
                    page.toAbsolutePath().toUri().toString())
                    .redirectErrorStream(true).redirectOutput(log.toFile()).start();
            if (!p.waitFor(TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
                p.destroyForcibly();
                throw new IOException(browser + " took more than " + TIMEOUT_SECONDS + " s; its messages are in " + log);
            }
            if (p.exitValue() != 0 || !Files.isRegularFile(raw)) {
                throw new IOException(browser + " exited with " + p.exitValue() + " and no screenshot; its messages are in " + log);
            }
            BufferedImage full = ImageIO.read(raw.toFile());
            if (full == null) {
                throw new IOException(raw + " is not an image javax.imageio reads");
            }
            BufferedImage cut = full.getSubimage(0, 0, full.getWidth(), Math.max(1, contentHeight(full)));
            ImageIO.write(cut, "png", png.toFile());
            return cut;
        } finally {
            Files.deleteIfExists(raw);
            try (var walk = Files.walk(profile)) {
                for (Path f : walk.sorted(java.util.Comparator.reverseOrder()).toList()) {
                    Files.deleteIfExists(f);
                }
            }
        }
    }

    /** The number of rows down to the last one that differs from the bottom-right pixel (the background). */
    static int contentHeight(BufferedImage image) {
        int background = image.getRGB(image.getWidth() - 1, image.getHeight() - 1);
        for (int y = image.getHeight() - 1; y >= 0; y--) {
            for (int x = 0; x < image.getWidth(); x++) {
                if (image.getRGB(x, y) != background) {
                    return y + 1;
                }
            }
        }
        return 0;
    }
}
