package org.pairpulse.ops.analysis.backtest;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.pairpulse.ingest.file.FileSource;
import org.pairpulse.ops.tools.scenario.ScenarioConfig;
import org.pairpulse.ops.tools.scenario.ScenarioFiles;
import org.pairpulse.ops.tools.scenario.ScenarioGenerator;

/**
 * A replay that reads and decodes on a second thread ({@link ReplaySource#readAhead}) and reads its tables on a third
 * (a pipelined {@link Backtest}: evaluation, drift, summaries) against one that does everything on its own thread: the
 * same baskets in the same order and a byte-identical {@code backtest.json}, for line items (CSV) and whole baskets
 * (JSON lines); an exception of the replaying side stops the reading one and reaches the caller.
 */
class ReadAheadTest {
  @TempDir
  static Path directory;

  @BeforeAll
  static void writeScenario() throws IOException {
    ScenarioFiles.writeAll(new ScenarioGenerator(ScenarioConfig.defaults().withDurationDays(2).withBasketsPerMinute(3)),
        directory);
  }

  @ParameterizedTest
  @ValueSource(strings = {ScenarioFiles.CSV_FILE, ScenarioFiles.JSON_LINES_FILE})
  void theSameBasketsInTheSameOrder(String fileName) throws IOException {
    BacktestSettings settings = BacktestSettings.defaults();
    List<ReplayBasket> alone = new ArrayList<>();
    List<ReplayBasket> ahead = new ArrayList<>();
    FileSource.Result one = new ReplaySource(settings.limits(), settings.front()).read(directory.resolve(fileName),
        null, alone::add);
    FileSource.Result two = new ReplaySource(settings.limits(), settings.front())
        .readAhead(directory.resolve(fileName), null, ahead::add);
    assertEquals(one, two);
    assertTrue(alone.size() > 5 * ReplaySource.BATCH_BASKETS, "several batches: " + alone.size());
    assertEquals(alone, ahead);
  }

  @ParameterizedTest
  @ValueSource(strings = {ScenarioFiles.CSV_FILE, ScenarioFiles.JSON_LINES_FILE})
  void aBacktestWritesByteIdenticalJson(String fileName) throws IOException {
    BacktestSettings settings = BacktestSettings.builder().engine(BacktestTest.SMALL)
        .refreshEveryMillis(BacktestTest.MINUTE * 30).cohortFloor(10).build();
    List<byte[]> outputs = new ArrayList<>();
    for (boolean readAhead : new boolean[] {false, true}) {
      BacktestRun run = BacktestRun.run(directory.resolve(fileName), settings, null, null, null, null, readAhead);
      Path written = run.writeJson(directory.resolve(fileName + "-" + readAhead));
      outputs.add(Files.readAllBytes(written));
    }
    assertArrayEquals(outputs.get(0), outputs.get(1));
  }

  @ParameterizedTest
  @ValueSource(ints = {1, 3 * ReplaySource.BATCH_BASKETS + 7})
  void anExceptionOfTheReplayingSideStopsBoth(int failAt) {
    BacktestSettings settings = BacktestSettings.defaults();
    AtomicInteger seen = new AtomicInteger();
    IllegalStateException thrown = assertThrows(IllegalStateException.class, () ->
        new ReplaySource(settings.limits(), settings.front()).readAhead(directory.resolve(ScenarioFiles.CSV_FILE), null,
            basket -> {
              if (seen.incrementAndGet() == failAt) {
                throw new IllegalStateException("stop at " + failAt);
              }
            }));
    assertEquals("stop at " + failAt, thrown.getMessage());
    assertEquals(failAt, seen.get(), "nothing reaches the sink after its exception");
  }

  @org.junit.jupiter.api.Test
  void anExceptionOnTheTableReadingThreadReachesTheCaller() throws IOException {
    BacktestSettings settings = BacktestSettings.builder().engine(BacktestTest.SMALL)
        .refreshEveryMillis(BacktestTest.MINUTE * 30).build();
    AtomicInteger refreshes = new AtomicInteger();
    Backtest.Listener failing = new Backtest.Listener() {
      @Override
      public void refreshed(long atMillis, org.pairpulse.sketch.table.PairTable table,
          org.pairpulse.serve.floor.FlooredTable floored, List<org.pairpulse.serve.drift.AlertEvent> events) {
        if (refreshes.incrementAndGet() == 3) {
          throw new IllegalStateException("reader stops at 3");
        }
      }
    };
    Backtest backtest = new Backtest(settings, failing, null, java.util.Set.of(), true);
    IllegalStateException thrown = assertThrows(IllegalStateException.class, () -> {
      new ReplaySource(settings.limits(), settings.front()).read(directory.resolve(ScenarioFiles.CSV_FILE), null,
          backtest::accept);
      backtest.finish();
    });
    assertEquals("reader stops at 3", thrown.getMessage());
    assertEquals(3, refreshes.get(), "no table is read after the exception");
  }
}
