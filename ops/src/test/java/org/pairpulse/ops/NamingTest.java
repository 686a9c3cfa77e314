package org.pairpulse.ops;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.Paths;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;

/**
 * The standing check of DEVELOPERS.md's "Naming": no name or phrasing that the project replaced because it was
 * recalled from a product, a talk or a well-known example comes back. Scans every tracked file of the repository
 * ({@code git ls-files}; without git, every file under the project root except {@code target/} and dot
 * directories), case-insensitively, binary files skipped.
 *
 * <p>The phrases are written in pieces so that this file does not match itself; it is also left out of the scan.
 * To retire another name, add it here with the reason in the comment beside it.
 */
class NamingTest {
  /** Replaced names and phrasings, lower case, each split so that this source does not contain it whole. */
  static final List<String> RETIRED = List.of(
      // real consumer devices once used as invented catalogue names
      "echo-" + "buds", "home-" + "hub", "aurora-" + "x2", "nimbus-" + "7", "to-" + "lightning", "pop-" + "grip",
      "loop-" + "air", "hush-" + "anc",
      // the confidence band's borrowed justification
      "neither " + "obvious", "obvious nor " + "far", "far-" + "fetched", "far " + "fetched",
      // slogans and examples recalled from elsewhere
      "people who " + "took", "who bought x also " + "bought",
      // the report's old name and its files
      "promo " + "list", "promo" + "list", "next-day " + "promo", "promo" + ".csv", "promo" + ".html",
      "promo" + "-suppressed",
      // the demo's old trigger
      "evening " + "broadcast", "e-sports " + "final", "tv " + "show",
      // the open data's original vendor and quoted product names
      "table" + "au", "howard " + "miller");

  static final Set<String> BINARY_SUFFIXES = Set.of(".png", ".gz", ".jar", ".ppsn", ".ckpt", ".zip", ".ico");
  static final String SELF = "ops/src/test/java/org/pairpulse/ops/NamingTest.java";

  @Test
  void noRetiredNameOrPhraseComesBack() throws IOException, InterruptedException {
    Path root = projectRoot();
    List<String> files = trackedFiles(root);
    assertTrue(files.size() > 100, "too few files found under " + root + ": " + files.size());
    assertTrue(files.contains("DEVELOPERS.md") && files.contains("ops/pom.xml"), "wrong root " + root);
    Set<String> found = new TreeSet<>();
    for (String file : files) {
      Path path = root.resolve(file);
      if (file.equals(SELF) || isBinaryName(file) || !Files.isRegularFile(path)) {
        continue;
      }
      byte[] bytes = Files.readAllBytes(path);
      if (isBinary(bytes)) {
        continue;
      }
      String text = new String(bytes, StandardCharsets.UTF_8).toLowerCase(Locale.ROOT);
      for (String retired : RETIRED) {
        int at = text.indexOf(retired);
        if (at >= 0) {
          int line = 1 + (int) text.substring(0, at).chars().filter(c -> c == '\n').count();
          found.add(file + ":" + line + ": '" + retired + "'");
        }
      }
    }
    assertEquals(Set.of(), found, "retired names or phrasings (DEVELOPERS.md, Naming)");
  }

  @Test
  void thePhrasesAreLowerCaseAndThisFileHoldsNoneWhole() throws IOException {
    String self = Files.readString(projectRoot().resolve(SELF), StandardCharsets.UTF_8).toLowerCase(Locale.ROOT);
    for (String retired : RETIRED) {
      assertEquals(retired.toLowerCase(Locale.ROOT), retired);
      assertTrue(!self.contains(retired), "this file holds '" + retired + "' whole: split it");
    }
  }

  /** The directory holding the parent pom and DEVELOPERS.md, from the working directory (a module's) upwards. */
  static Path projectRoot() {
    Path dir = Paths.get("").toAbsolutePath();
    for (Path p = dir; p != null; p = p.getParent()) {
      if (Files.isRegularFile(p.resolve("DEVELOPERS.md")) && Files.isRegularFile(p.resolve("pom.xml"))) {
        return p;
      }
    }
    throw new IllegalStateException("no project root above " + dir);
  }

  /** {@code git ls-files} at the root, or, without git, a walk of the tree without target/ and dot directories. */
  static List<String> trackedFiles(Path root) throws IOException, InterruptedException {
    if (Files.exists(root.resolve(".git"))) {
      try {
        Process git = new ProcessBuilder("git", "ls-files", "-z").directory(root.toFile())
            .redirectError(ProcessBuilder.Redirect.DISCARD).start();
        byte[] out;
        try (InputStream in = git.getInputStream()) {
          out = in.readAllBytes();
        }
        if (git.waitFor(60, TimeUnit.SECONDS) && git.exitValue() == 0) {
          List<String> files = new ArrayList<>();
          for (String name : new String(out, StandardCharsets.UTF_8).split("\0")) {
            if (!name.isEmpty()) {
              files.add(name);
            }
          }
          return files;
        }
      } catch (IOException e) {
        // no git on this machine: walk the tree instead
      }
    }
    List<String> files = new ArrayList<>();
    try (Stream<Path> walk = Files.walk(root)) {
      walk.filter(Files::isRegularFile).map(root::relativize).filter(NamingTest::walked)
          .forEach(p -> files.add(p.toString().replace('\\', '/')));
    }
    return files;
  }

  private static boolean walked(Path relative) {
    for (Path part : relative) {
      String name = part.toString();
      if (name.equals("target") || name.startsWith(".") && !name.equals(relative.getFileName().toString())) {
        return false;
      }
    }
    return true;
  }

  private static boolean isBinaryName(String file) {
    String lower = file.toLowerCase(Locale.ROOT);
    return BINARY_SUFFIXES.stream().anyMatch(lower::endsWith);
  }

  private static boolean isBinary(byte[] bytes) {
    for (int i = 0; i < Math.min(bytes.length, 8000); i++) {
      if (bytes[i] == 0) {
        return true;
      }
    }
    return false;
  }
}
