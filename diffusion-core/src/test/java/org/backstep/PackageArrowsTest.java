package org.backstep;

import org.junit.jupiter.api.Test;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import java.util.stream.Stream;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The arrows of DEVELOPERS.md ("Which way the arrows point"), checked on the main sources: no
 * package below the front door names it (imports and full-name Javadoc links alike), and the
 * package graph has no circle. Common practice, no source: a dependency graph read from the
 * import lines.
 */
class PackageArrowsTest {

    private static final Pattern IMPORT = Pattern.compile("^import (?:static )?(org\\.backstep(?:\\.[a-z]+)*)\\.[A-Z]",
            Pattern.MULTILINE);
    private static final Pattern LINK = Pattern.compile("\\{@link (org\\.backstep(?:\\.[a-z]+)*)\\.[A-Z]");
    private static final String FRONT_DOOR = "org.backstep";

    @Test
    void nothingBelowTheFrontDoorNamesItAndThereIsNoCircle() throws IOException {
        Map<String, Set<String>> graph = graph();
        assertTrue(graph.size() > 10, "read the packages of " + sources() + ": " + graph.keySet());
        for (Map.Entry<String, Set<String>> e : graph.entrySet()) {
            if (!e.getKey().equals(FRONT_DOOR)) {
                assertTrue(!e.getValue().contains(FRONT_DOOR), e.getKey() + " names the front door package");
            }
        }
        assertEquals(List.of(), circles(graph), "package circles");
    }

    private static Path sources() {
        return Path.of(System.getProperty("basedir", System.getProperty("user.dir"))).resolve("src/main/java");
    }

    private static Map<String, Set<String>> graph() throws IOException {
        Map<String, Set<String>> graph = new TreeMap<>();
        Path root = sources();
        try (Stream<Path> files = Files.walk(root)) {
            for (Path f : files.filter(p -> p.toString().endsWith(".java")).toList()) {
                String pkg = root.relativize(f.getParent()).toString().replace('/', '.');
                String text = Files.readString(f);
                Set<String> to = graph.computeIfAbsent(pkg, k -> new TreeSet<>());
                for (Pattern p : List.of(IMPORT, LINK)) {
                    Matcher m = p.matcher(text);
                    while (m.find()) {
                        if (!m.group(1).equals(pkg)) {
                            to.add(m.group(1));
                        }
                    }
                }
            }
        }
        return graph;
    }

    /** Every circle found by a depth-first search, each as the list of its packages. */
    private static List<List<String>> circles(Map<String, Set<String>> graph) {
        List<List<String>> found = new ArrayList<>();
        Set<String> done = new TreeSet<>();
        for (String start : graph.keySet()) {
            walk(start, graph, new ArrayList<>(), done, found);
        }
        return found;
    }

    private static void walk(String at, Map<String, Set<String>> graph, List<String> path, Set<String> done,
                             List<List<String>> found) {
        int i = path.indexOf(at);
        if (i >= 0) {
            found.add(new ArrayList<>(path.subList(i, path.size())));
            return;
        }
        if (done.contains(at)) {
            return;
        }
        path.add(at);
        for (String next : graph.getOrDefault(at, Set.of())) {
            walk(next, graph, path, done, found);
        }
        path.remove(path.size() - 1);
        done.add(at);
    }
}
