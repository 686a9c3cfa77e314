package org.pairpulse.ingest.kafka;

import java.util.List;
import org.apache.kafka.common.TopicPartition;

/**
 * How much of the group's state one served table holds (group view, {@link GroupView}), as ingest sees it: partitions
 * by name, and what was read. ops maps it to serve's {@code GroupStatus.Coverage}, which says what is merged and
 * whether the table is partial.
 *
 * @param partitions input partitions of the group's topics
 * @param live partitions this instance owns and counts itself
 * @param remote partitions merged from another instance's newest committed checkpoint
 * @param empty partitions with no record and no checkpoint (nothing to merge; covered)
 * @param missing partitions with records but no checkpoint readable here: their baskets are not in the table
 * @param stale partitions whose contribution does not reach the records they held a staleness bound ago: a remote
 *     checkpoint not renewed, or an owned partition still catching up after a restore
 * @param oldestContributionAgeMillis the largest age of a merged contribution: for a remote partition with records
 *     beyond its checkpoint, the time since that checkpoint was taken; 0 when every contribution is up to date
 * @param publicationBytes the encoded bytes of the checkpoints read from the state topic so far
 * @param publicationsRead the checkpoints read from the state topic so far (own partitions' included)
 */
public record GroupCoverage(int partitions, int live, int remote, int empty, List<TopicPartition> missing,
    List<TopicPartition> stale, long oldestContributionAgeMillis, long publicationBytes, long publicationsRead) {
  public GroupCoverage {
    missing = List.copyOf(missing);
    stale = List.copyOf(stale);
  }
}
