package org.pairpulse.ops.analysis.report;

import java.io.PrintWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import java.util.concurrent.Callable;
import org.apache.kafka.common.config.ConfigException;
import org.pairpulse.ingest.file.ReadProgress;
import org.pairpulse.ingest.kafka.IngestConfig;
import org.pairpulse.ingest.segment.SegmentSettings;
import org.pairpulse.ops.analysis.backtest.BacktestSettings;
import org.pairpulse.ops.analysis.backtest.SettingsFile;
import org.pairpulse.ops.analysis.terminal.FileProgress;
import org.pairpulse.sketch.engine.EngineConfig;
import org.pairpulse.sketch.table.PairTable;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.Spec;

/** {@code pairpulse report}: the offer shortlist, see {@link ShortlistReport}. */
@Command(name = "report", mixinStandardHelpOptions = true, sortOptions = false, usageHelpAutoWidth = true,
    description = {
        "Writes the offer shortlist: per segment, the top emerging pairs and the best suggestion pairs inside the"
            + " confidence band, each with its evidence (lift and its interval, confidence, support, recent against"
            + " baseline), as shortlist.csv, shortlist-suppressed.csv and a static shortlist.html with small charts. Every number"
            + " respects the cohort floor; rows under it are only counted."},
    exitCodeListHeading = "%nExit codes:%n",
    exitCodeList = {"0:report written", "1:the report failed (unreadable input, ...)", "2:invalid options"})
public final class ReportCommand implements Callable<Integer> {
  @Spec
  CommandSpec spec;

  static final class Source {
    @Option(names = "--input", paramLabel = "FILE", description = "Basket file to replay (JSON lines or CSV, as ingest"
        + " reads them); the lists are as of its newest event time.")
    Path input;

    @Option(names = "--snapshot", paramLabel = "PATH", description = "Saved state instead: an engine snapshot, an"
        + " ingest partition checkpoint (.ckpt) or a directory of them (a local checkpoint.dir, merged), with the"
        + " segments ingest counted.")
    Path snapshot;
  }

  @ArgGroup(exclusive = true, multiplicity = "1")
  Source source;

  @Option(names = "--out", required = true, paramLabel = "DIR", description = "Output directory.")
  Path out;

  @Option(names = "--segment-attribute", paramLabel = "NAME", description = "A basket attribute whose values are"
      + " segments (repeatable), e.g. channel; default: the settings file's segments.attributes. With --snapshot: only"
      + " the segments of these attributes.")
  List<String> segmentAttributes = new ArrayList<>();

  @Option(names = "--config", paramLabel = "FILE", description = "Settings file (Java properties): drift.*,"
      + " serve.cohort.floor, engine.*, ingest's front keys and segments.* (as 'pairpulse run' reads them).")
  Path config;

  @Option(names = "--floor", paramLabel = "N", description = "Cohort floor in distinct baskets (default: 50).")
  Double floor;

  @Option(names = "--min-confidence", paramLabel = "X", description = "Lower end of the confidence band"
      + " (default: ${DEFAULT-VALUE}, a common-practice starting point; tune it to your offers' uptake).")
  double minConfidence = 0.30;

  @Option(names = "--max-confidence", paramLabel = "X", description = "Upper end of the confidence band"
      + " (default: ${DEFAULT-VALUE}).")
  double maxConfidence = 0.60;

  @Option(names = "--top", paramLabel = "N", description = "Rows per list and segment (default: ${DEFAULT-VALUE}).")
  int top = 20;

  @Option(names = "--horizon", paramLabel = "NAME", description = "Horizon of the suggestion pairs"
      + " (default: ${DEFAULT-VALUE}).")
  String horizon = "day";

  @Option(names = "--quiet", description = "No progress line.")
  boolean quiet;

  @Override
  public Integer call() throws Exception {
    BacktestSettings base = BacktestSettings.defaults();
    ShortlistSettings settings;
    SegmentSettings segments;
    try {
      base = SettingsFile.readOption(config, base, spec.commandLine().getErr(), "report");
      settings = new ShortlistSettings(minConfidence, maxConfidence, top, horizon, base.drift(),
          floor != null ? floor : base.cohortFloor());
      segments = segmentSettings();
    } catch (IllegalArgumentException | ConfigException e) {
      throw new ParameterException(spec.commandLine(), e.getMessage(), e);
    }
    Map<String, PairTable> tables;
    EngineConfig engine;
    if (source.input != null) {
      requireFile(source.input, "--input");
      engine = base.engine();
      ReadProgress progress = quiet ? null : FileProgress.onStandardError("report", Files.size(source.input));
      Map<String, Long> skipped = new TreeMap<>();
      tables = ReportSources.replay(source.input, engine, base, segments,
          (attribute, value, reason) -> skipped.merge(attribute + " (" + reason.wireName() + ")", 1L, Long::sum), progress);
      PrintWriter stderr = spec.commandLine().getErr();
      skipped.forEach((what, count) -> stderr.printf(Locale.ROOT, "note: %,d baskets' value of %s made no segment; they"
          + " count in 'all' only (segments.max.values=%d per attribute; values are plain names)%n", count, what,
          segments.maxValuesPerAttribute()));
      stderr.flush();
    } else {
      if (!Files.isRegularFile(source.snapshot) && !Files.isDirectory(source.snapshot)) {
        throw new ParameterException(spec.commandLine(), "--snapshot: no such file or directory: " + source.snapshot);
      }
      try {
        engine = ReportSources.snapshotConfig(source.snapshot);
        tables = ReportSources.snapshot(source.snapshot, segments.attributes());
      } catch (IllegalArgumentException e) {
        throw new ParameterException(spec.commandLine(), "--snapshot: " + e.getMessage(), e);
      }
    }
    ShortlistReport report;
    try {
      report = ShortlistReport.build(tables, engine.horizons(), settings);
    } catch (IllegalArgumentException e) {
      throw new ParameterException(spec.commandLine(), e.getMessage(), e);
    }
    Files.createDirectories(out);
    try (Writer csv = Files.newBufferedWriter(out.resolve(ShortlistCsv.FILE), StandardCharsets.UTF_8);
        Writer suppressed = Files.newBufferedWriter(out.resolve(ShortlistCsv.SUPPRESSED_FILE), StandardCharsets.UTF_8);
        Writer html = Files.newBufferedWriter(out.resolve(ShortlistHtml.FILE), StandardCharsets.UTF_8)) {
      ShortlistCsv.write(report, csv);
      ShortlistCsv.writeSuppressed(report, suppressed);
      ShortlistHtml.write(report, html);
    }
    PrintWriter stdout = spec.commandLine().getOut();
    stdout.printf(Locale.ROOT, "report as of %s: %d segment(s)%n", report.asOfMillis() == Long.MIN_VALUE ? "(no data)"
        : Instant.ofEpochMilli(report.asOfMillis()), report.segments().size());
    for (ShortlistReport.Segment segment : report.segments()) {
      stdout.printf(Locale.ROOT, "  %-24s %s%n", segment.name(), segment.suppressed()
          ? "under the cohort floor: nothing shown"
          : String.format(Locale.ROOT, "%d emerging, %d suggestion rows (%d of %d pairs screened passed), %d held back"
              + " by the floor", segment.emerging().size(), segment.suggestions().size(), segment.passedPairs(),
              segment.screenedPairs(), segment.suppressedRows()));
    }
    stdout.println("  written: " + out.resolve(ShortlistCsv.FILE) + ", " + out.resolve(ShortlistCsv.SUPPRESSED_FILE) + ", "
        + out.resolve(ShortlistHtml.FILE));
    stdout.flush();
    return 0;
  }

  /**
   * The segments: {@code --segment-attribute}, else the settings file's {@code segments.attributes}; the bound and
   * the segment engines' fraction from the settings file ({@code segments.max.values},
   * {@code segments.tracked.fraction}), checked as ingest checks them.
   */
  private SegmentSettings segmentSettings() throws java.io.IOException {
    Map<String, Object> props = new HashMap<>();
    if (config != null) {
      Properties file = new Properties();
      try (java.io.Reader reader = Files.newBufferedReader(config, StandardCharsets.UTF_8)) {
        file.load(reader);
      }
      for (String key : List.of(IngestConfig.SEGMENT_ATTRIBUTES, IngestConfig.SEGMENT_MAX_VALUES,
          IngestConfig.SEGMENT_TRACKED_FRACTION)) {
        if (file.getProperty(key) != null) {
          props.put(key, file.getProperty(key).trim());
        }
      }
    }
    if (!segmentAttributes.isEmpty()) {
      props.put(IngestConfig.SEGMENT_ATTRIBUTES, String.join(",", segmentAttributes));
    }
    props.put(IngestConfig.BOOTSTRAP_SERVERS, "unused:9092"); // required keys of the whole ingest configuration
    props.put(IngestConfig.TOPICS, "unused");
    props.put(IngestConfig.CHECKPOINT_STORE, "none");
    return new IngestConfig(props).segmentSettings();
  }

  private void requireFile(Path file, String option) {
    if (!Files.isRegularFile(file)) {
      throw new ParameterException(spec.commandLine(), option + ": no such file: " + file);
    }
  }
}
