package org.pairpulse.serve.drift;

import java.nio.charset.StandardCharsets;
import java.util.UUID;
import org.pairpulse.serve.floor.PairKey;

/**
 * A raised or resolved alert, as published (alerts topic, webhook, alert history).
 *
 * @param id a stable id: the same alert transition always gets the same id (consumers can deduplicate)
 * @param kind emerging, fading or bundle
 * @param transition raised or resolved
 * @param segment the segment whose pair table produced it
 * @param pair the pair
 * @param atMillis when the transition happened (alert clock)
 * @param sinceMillis when the condition began (raised: start of the dwell; resolved: when the alert was raised)
 * @param tableVersion the pair-table version of the deciding observation
 * @param evidence the deciding observation (null when the pair left the published table)
 * @param change what changed (rate, association or both) for an emerging or fading alert; null for a bundle
 *     alert or a resolution
 * @param summary the evidence in plain words ({@link DriftWords})
 */
public record AlertEvent(String id, AlertKind kind, AlertTransition transition, String segment, PairKey pair,
    long atMillis, long sinceMillis, long tableVersion, DriftFinding evidence, DriftChange change, String summary) {

  /** Builds an event with its stable id and no reported change. */
  public static AlertEvent of(AlertKind kind, AlertTransition transition, String segment, PairKey pair, long atMillis,
      long sinceMillis, long tableVersion, DriftFinding evidence) {
    return of(kind, transition, segment, pair, atMillis, sinceMillis, tableVersion, evidence, null);
  }

  /** Builds an event with its stable id. */
  public static AlertEvent of(AlertKind kind, AlertTransition transition, String segment, PairKey pair, long atMillis,
      long sinceMillis, long tableVersion, DriftFinding evidence, DriftChange change) {
    String name = String.join("\u0000", segment, kind.wireName(), transition.wireName(), pair.first(), pair.second(),
        Long.toString(sinceMillis));
    String id = UUID.nameUUIDFromBytes(name.getBytes(StandardCharsets.UTF_8)).toString();
    return new AlertEvent(id, kind, transition, segment, pair, atMillis, sinceMillis, tableVersion, evidence, change,
        DriftWords.summary(kind, change, evidence));
  }
}
