package org.pairpulse.ops.analysis.terminal;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.List;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;

/** The one progress line of the commands: in a log one line per update, on a terminal one line redrawn in place. */
class FileProgressTest {
  @Test
  void inALogEveryIntervalGivesOneLineAndTheLastSaysHowLong() {
    StringWriter shown = new StringWriter();
    AtomicLong now = new AtomicLong(0);
    FileProgress progress = new FileProgress(new ProgressLine(new PrintWriter(shown), false), now::get, "lines.csv.gz",
        4 << 20, 1000);
    now.set(500);
    progress.update(1 << 20, 1000, 400, 0); // within the interval: nothing
    assertEquals("", shown.toString());
    now.set(1000);
    progress.update(2 << 20, 2000, 900, 1); // half the bytes in 1 s: 1 s left
    now.set(1500);
    progress.update(3 << 20, 3000, 1400, 1); // within the interval again
    now.set(4000);
    progress.finish(4 << 20, 6003, 3000, 2);
    List<String> lines = shown.toString().lines().toList();
    assertEquals(List.of(
        "lines.csv.gz  50.0% 2.0 MB/4.0 MB  2,000 lines (2,000/s)  900 baskets  1 dead letters eta 0:00:01",
        "lines.csv.gz 100.0% 4.0 MB/4.0 MB  6,003 lines (1,501/s)  3,000 baskets  2 dead letters in 0:00:04"), lines);
    assertFalse(shown.toString().contains("\r"), "no redraw in a log");
  }

  @Test
  void onATerminalTheLineIsRedrawnInPlaceWithMessagesAboveIt() {
    StringWriter shown = new StringWriter();
    ProgressLine line = new ProgressLine(new PrintWriter(shown), true);
    assertFalse(line.printed());
    line.progress("step 1");
    line.message("hello");
    line.progress("step 2");
    line.end();
    assertTrue(line.printed());
    String clear = "\r\033[K";
    assertEquals(clear + "step 1" + clear + "hello\nstep 1" + clear + "step 2\n", shown.toString());
  }
}
