package org.pairpulse.serve.drift;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.TreeMap;
import java.util.function.BiFunction;
import org.pairpulse.serve.floor.PairKey;

/**
 * The alert state machine: turns a stream of {@link DriftFinding}s into raised and resolved
 * {@link AlertEvent}s that neither flap nor repeat. Deterministic: time comes from the caller (an
 * injected clock), keys are processed in sorted order.
 *
 * <pre>
 *              enter holds                 enter held ≥ dwell            exit holds
 *   (idle) ──────────────► PENDING ───────────────────────► ACTIVE ─────────────► CLEARING
 *      ▲                      │ enter stops                  (RAISED)  ◄───────────  │ exit stops
 *      │                      ▼                                                     │
 *      └────── (idle) ◄───────┘              cooldown over          exit held ≥ dwell ▼
 *      └──────────────────────────────────── COOLDOWN ◄──────────────────────── (RESOLVED)
 * </pre>
 * Entry and exit use different thresholds (hysteresis, see {@link DriftFinding#enters} and
 * {@link DriftFinding#exits}); both must hold for {@code minDwellMillis}; after a resolution the
 * same pair and kind stay quiet for {@code cooldownMillis}. A pair that leaves the published table
 * (evicted, or under the cohort floor) counts as "exit holds" for an active alert and as "enter
 * stops" for a pending one. Memory: one small record per pair and kind that is pending, active,
 * clearing or cooling down; idle pairs cost nothing.
 *
 * <p>Not thread-safe: one thread calls {@link #step}.
 */
public final class AlertMachine {
  /** The states of a (pair, kind) track; idle tracks are not stored. */
  public enum State {
    PENDING, ACTIVE, CLEARING, COOLDOWN;

    public String wireName() {
      return name().toLowerCase(Locale.ROOT);
    }
  }

  /** A track's key. */
  record Key(PairKey pair, AlertKind kind) {}

  private static final Comparator<Key> ORDER = Comparator.comparing((Key k) -> k.pair().first())
      .thenComparing(k -> k.pair().second()).thenComparing(Key::kind);

  /** A (pair, kind) track's state, readable by reports. */
  public static final class Track {
    State state;
    long sinceMillis;
    long raisedAtMillis = Long.MIN_VALUE;
    long clearingSinceMillis;
    long cooldownUntilMillis;
    DriftFinding last;

    public State state() {
      return state;
    }

    /** When the entry condition began to hold (start of the dwell). */
    public long sinceMillis() {
      return sinceMillis;
    }

    /** When the alert was raised, or Long.MIN_VALUE if it was not (yet). */
    public long raisedAtMillis() {
      return raisedAtMillis;
    }

    /** The newest observation of the pair. */
    public DriftFinding last() {
      return last;
    }
  }

  private final DriftSettings settings;
  private final String segment;
  private final TreeMap<Key, Track> tracks = new TreeMap<>(ORDER);

  public AlertMachine(DriftSettings settings, String segment) {
    this.settings = Objects.requireNonNull(settings, "settings");
    this.segment = Objects.requireNonNull(segment, "segment");
  }

  /**
   * One observation round (one table version).
   *
   * @param nowMillis the alert clock's time
   * @param tableVersion the version observed
   * @param entering findings that meet an entry condition this round (others may be left out)
   * @param lookup the current finding of any pair for a kind, or null when it is not published in both horizons
   * @return the events of this round, in key order
   */
  public List<AlertEvent> step(long nowMillis, long tableVersion, Iterable<DriftFinding> entering,
      BiFunction<PairKey, AlertKind, DriftFinding> lookup) {
    for (DriftFinding finding : entering) {
      for (AlertKind kind : AlertKind.values()) {
        if (finding.enters(kind, settings)) {
          tracks.computeIfAbsent(new Key(finding.pair(), kind), k -> pending(nowMillis));
        }
      }
    }
    List<AlertEvent> events = new ArrayList<>();
    for (Iterator<Map.Entry<Key, Track>> it = tracks.entrySet().iterator(); it.hasNext(); ) {
      Map.Entry<Key, Track> entry = it.next();
      Key key = entry.getKey();
      Track track = entry.getValue();
      DriftFinding now = lookup.apply(key.pair(), key.kind());
      if (now != null) {
        track.last = now;
      }
      if (!advance(key, track, now, nowMillis, tableVersion, events)) {
        it.remove();
      }
    }
    return events;
  }

  private static Track pending(long nowMillis) {
    Track track = new Track();
    track.state = State.PENDING;
    track.sinceMillis = nowMillis;
    return track;
  }

  /** Moves one track; returns false when it becomes idle (to be removed). */
  private boolean advance(Key key, Track track, DriftFinding now, long nowMillis, long version,
      List<AlertEvent> events) {
    boolean enters = now != null && now.enters(key.kind(), settings);
    boolean exits = now == null || now.exits(key.kind(), settings);
    if (track.state == State.COOLDOWN) {
      if (nowMillis < track.cooldownUntilMillis) {
        return true;
      }
      if (!enters) {
        return false;
      }
      track.state = State.PENDING; // cooldown over and the condition holds again: a new dwell starts
      track.sinceMillis = nowMillis;
      track.raisedAtMillis = Long.MIN_VALUE;
    }
    if (track.state == State.PENDING) {
      if (!enters) {
        return false;
      }
      if (nowMillis - track.sinceMillis < settings.minDwellMillis()) {
        return true;
      }
      track.state = State.ACTIVE;
      track.raisedAtMillis = nowMillis;
      events.add(AlertEvent.of(key.kind(), AlertTransition.RAISED, segment, key.pair(), nowMillis, track.sinceMillis,
          version, now, now.changeFor(key.kind(), settings)));
      return true;
    }
    if (track.state == State.ACTIVE) {
      if (!exits) {
        return true;
      }
      track.state = State.CLEARING;
      track.clearingSinceMillis = nowMillis;
    }
    // CLEARING
    if (!exits) {
      track.state = State.ACTIVE;
      return true;
    }
    if (nowMillis - track.clearingSinceMillis < settings.minDwellMillis()) {
      return true;
    }
    events.add(AlertEvent.of(key.kind(), AlertTransition.RESOLVED, segment, key.pair(), nowMillis,
        track.raisedAtMillis, version, now));
    track.state = State.COOLDOWN;
    track.cooldownUntilMillis = nowMillis + settings.cooldownMillis();
    return true;
  }

  /** The track of a pair and kind, if it is not idle. */
  public Track track(PairKey pair, AlertKind kind) {
    return tracks.get(new Key(pair, kind));
  }

  /** Tracks of one kind that are not idle, in key order. */
  public List<Map.Entry<PairKey, Track>> tracks(AlertKind kind) {
    List<Map.Entry<PairKey, Track>> list = new ArrayList<>();
    for (Map.Entry<Key, Track> entry : tracks.entrySet()) {
      if (entry.getKey().kind() == kind) {
        list.add(Map.entry(entry.getKey().pair(), entry.getValue()));
      }
    }
    return list;
  }

  /**
   * A track as it travels between the instances of a group (the alert leader's state): everything but the newest
   * observation, which the next {@link #step} reads again.
   */
  public record TrackState(String first, String second, AlertKind kind, State state, long sinceMillis,
      long raisedAtMillis, long clearingSinceMillis, long cooldownUntilMillis) {}

  /** Every non-idle track, in key order. */
  public List<TrackState> exportTracks() {
    List<TrackState> out = new ArrayList<>(tracks.size());
    tracks.forEach((key, t) -> out.add(new TrackState(key.pair().first(), key.pair().second(), key.kind(), t.state,
        t.sinceMillis, t.raisedAtMillis, t.clearingSinceMillis, t.cooldownUntilMillis)));
    return out;
  }

  /** Replaces every track with {@code states} (their newest observations unknown until the next step). */
  public void restoreTracks(List<TrackState> states) {
    tracks.clear();
    for (TrackState s : states) {
      Track t = new Track();
      t.state = s.state();
      t.sinceMillis = s.sinceMillis();
      t.raisedAtMillis = s.raisedAtMillis();
      t.clearingSinceMillis = s.clearingSinceMillis();
      t.cooldownUntilMillis = s.cooldownUntilMillis();
      tracks.put(new Key(new PairKey(s.first(), s.second()), s.kind()), t);
    }
  }

  /** Number of non-idle tracks (the machine's memory). */
  public int size() {
    return tracks.size();
  }
}
