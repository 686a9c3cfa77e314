package org.pairpulse.serve;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;

/**
 * serve's package rules, read from its main sources: {@code internal} is entered only through
 * {@code ServeRuntime} and only by {@code ServeServer}; the queries and the JSON shapes carry no HTTP types; no
 * main source file is over 500 lines.
 */
class PackageRulesTest {
  private static final Path MAIN = Path.of("src/main/java/org/pairpulse/serve");

  private static Map<String, String> sources() throws IOException {
    Map<String, String> out = new TreeMap<>();
    try (Stream<Path> files = Files.walk(MAIN)) {
      for (Path file : files.filter(f -> f.toString().endsWith(".java")).toList()) {
        out.put(MAIN.relativize(file).toString().replace('\\', '/'), Files.readString(file));
      }
    }
    assertTrue(out.size() > 50, "serve's main sources found: " + out.size());
    return out;
  }

  @Test
  void internalIsEnteredOnlyThroughServeRuntimeByServeServer() throws IOException {
    List<String> found = new ArrayList<>();
    for (Map.Entry<String, String> e : sources().entrySet()) {
      if (e.getKey().startsWith("internal/")) {
        if (e.getValue().contains("\npublic ") && !e.getKey().equals("internal/ServeRuntime.java")) {
          found.add(e.getKey() + " is public");
        }
        continue;
      }
      e.getValue().lines().filter(l -> l.startsWith("import org.pairpulse.serve.internal."))
          .forEach(l -> found.add(e.getKey() + ": " + l));
    }
    assertEquals(List.of("ServeServer.java: import org.pairpulse.serve.internal.ServeRuntime;"), found);
  }

  @Test
  void queriesAndJsonShapesCarryNoHttpTypes() throws IOException {
    List<String> found = new ArrayList<>();
    for (Map.Entry<String, String> e : sources().entrySet()) {
      if (e.getKey().startsWith("query/") || e.getKey().startsWith("wire/") || e.getKey().startsWith("suggest/")) {
        e.getValue().lines().filter(l -> l.startsWith("import io.javalin") || l.startsWith("import org.eclipse.jetty")
            || l.startsWith("import org.pairpulse.serve.internal")).forEach(l -> found.add(e.getKey() + ": " + l));
      }
    }
    assertEquals(List.of(), found);
  }

  @Test
  void noMainSourceFileIsOver500Lines() throws IOException {
    List<String> found = new ArrayList<>();
    sources().forEach((file, text) -> {
      long lines = text.lines().count();
      if (lines > 500) {
        found.add(file + ": " + lines);
      }
    });
    assertEquals(List.of(), found);
  }
}
