package org.pairpulse.ingest.file;

/**
 * Told how far a {@link FileSource} has read a file: ingest reports, the caller shows (ops draws it on the
 * terminal). Calls come on the reading thread: {@link #update} every 1,024 lines, {@link #finish} once at the end.
 * The counts only grow.
 */
public interface ReadProgress {
  /** Reports nothing. */
  ReadProgress NONE = new ReadProgress() {
    @Override
    public void update(long bytesRead, long lines, long baskets, long deadLetters) {
      // nothing to report
    }

    @Override
    public void finish(long bytesRead, long lines, long baskets, long deadLetters) {
      // nothing to report
    }
  };

  /**
   * So far: compressed bytes read of the file, lines read, baskets handed to the sink, records dead-lettered.
   */
  void update(long bytesRead, long lines, long baskets, long deadLetters);

  /** The final counts, once the file is read to its end and its open baskets are closed. */
  void finish(long bytesRead, long lines, long baskets, long deadLetters);
}
