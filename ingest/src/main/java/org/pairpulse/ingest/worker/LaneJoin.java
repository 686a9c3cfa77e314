package org.pairpulse.ingest.worker;

import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.atomic.AtomicReferenceArray;
import java.util.function.Function;

/**
 * One part computed on every lane, as a command of that lane (so in its order, in parallel with the other lanes),
 * and the parts combined in lane order on the thread of the lane that delivers its part last.
 *
 * <p>Why the last lane combines: a merge and its pair tables cost as much as the rest of a refresh. The caller is the
 * poll loop, which must not stall on them (a future combined with {@code thenApply} may run on the caller's thread
 * when the parts are already done), and a thread of its own would only compete with the lanes for the cores.
 *
 * <p>A lane whose part (or the combination) fails completes the result exceptionally; that lane has failed, as a
 * worker does on any exception.
 */
final class LaneJoin<T, R> {
  private final AtomicReferenceArray<T> parts;
  private final AtomicInteger missing;
  private final Function<List<T>, R> combine;
  private final CompletableFuture<R> result = new CompletableFuture<>();

  private LaneJoin(int lanes, Function<List<T>, R> combine) {
    this.parts = new AtomicReferenceArray<>(lanes);
    this.missing = new AtomicInteger(lanes);
    this.combine = combine;
  }

  /** Runs {@code part} on every lane and {@code combine} on the parts in lane order. */
  static <T, R> CompletableFuture<R> run(List<EngineWorker> lanes, Function<EngineWorker, T> part,
      Function<List<T>, R> combine) {
    LaneJoin<T, R> join = new LaneJoin<>(lanes.size(), combine);
    for (int i = 0; i < lanes.size(); i++) {
      int lane = i;
      EngineWorker worker = lanes.get(i);
      worker.call(() -> {
        join.deliver(lane, part.apply(worker));
        return null;
      }).whenComplete((ignored, error) -> {
        if (error != null) {
          join.result.completeExceptionally(error);
        }
      });
    }
    return join.result;
  }

  private void deliver(int lane, T part) {
    parts.set(lane, part);
    if (missing.decrementAndGet() == 0) {
      List<T> inLaneOrder = new ArrayList<>(parts.length());
      for (int i = 0; i < parts.length(); i++) {
        inLaneOrder.add(parts.get(i));
      }
      result.complete(combine.apply(inLaneOrder));
    }
  }
}
