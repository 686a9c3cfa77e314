package org.pairpulse.ingest.kafka;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.TreeMap;
import org.apache.kafka.clients.consumer.ConsumerPartitionAssignor.Assignment;
import org.apache.kafka.clients.consumer.ConsumerPartitionAssignor.GroupSubscription;
import org.apache.kafka.clients.consumer.ConsumerPartitionAssignor.Subscription;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.common.Cluster;
import org.apache.kafka.common.Node;
import org.apache.kafka.common.PartitionInfo;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * {@link SharedTopicsAssignor} over a family of groups (members joining one by one, then one leaving), against the
 * plain cooperative sticky assignor run on the basket topics alone as the oracle: the basket partitions go exactly as
 * the oracle puts them, every member gets every shared partition, and each round passes the rule the Kafka client's
 * leader checks in cooperative rounds (no partition is added to one member while another still owns it; from memory
 * of {@code ConsumerCoordinator.validateCooperativeAssignment}).
 */
class SharedTopicsAssignorTest {
  private static final Node NODE = new Node(1, "localhost", 9092);

  @ParameterizedTest
  @CsvSource({"1, 4, 1", "3, 6, 2", "4, 6, 3", "5, 12, 1", "2, 1, 4"})
  void basketPartitionsGoAsTheStickyAssignorPutsThemAndSharedOnesToEveryone(int members, int basketPartitions,
      int statePartitions) {
    Cluster cluster = cluster(Map.of("baskets", basketPartitions, "more", 2, "state", statePartitions, "state.alerts", 1));
    SharedTopicsAssignor assignor = new SharedTopicsAssignor();
    assignor.configure(Map.of(SharedTopicsAssignor.SHARED_TOPICS, "state,state.alerts"));
    Set<TopicPartition> shared = partitionsOf(cluster, "state", "state.alerts");

    Map<String, List<TopicPartition>> owned = new TreeMap<>();
    Map<String, List<TopicPartition>> oracleOwned = new TreeMap<>();
    List<List<String>> rounds = new ArrayList<>();
    List<String> present = new ArrayList<>();
    for (int m = 0; m < members; m++) {
      present.add("member-" + m);
      rounds.add(List.copyOf(present));
    }
    if (members > 1) {
      present.remove(0);
      rounds.add(List.copyOf(present));
    }
    int generation = 0;
    for (List<String> group : rounds) {
      owned.keySet().retainAll(group);
      oracleOwned.keySet().retainAll(group);
      // two cooperative rounds per membership change, as the client runs them
      for (int round = 0; round < 2; round++) {
        generation++;
        Map<String, Subscription> subscriptions = new HashMap<>();
        Map<String, Subscription> oracleSubscriptions = new HashMap<>();
        for (String member : group) {
          subscriptions.put(member, new Subscription(List.of("baskets", "more", "state", "state.alerts"), null,
              owned.getOrDefault(member, List.of()), generation - 1, Optional.empty()));
          oracleSubscriptions.put(member, new Subscription(List.of("baskets", "more"), null,
              oracleOwned.getOrDefault(member, List.of()), generation - 1, Optional.empty()));
        }
        Map<String, Assignment> got = assignor.assign(cluster, new GroupSubscription(subscriptions)).groupAssignment();
        Map<String, Assignment> oracle = new CooperativeStickyAssignor()
            .assign(cluster, new GroupSubscription(oracleSubscriptions)).groupAssignment();
        checkCooperative(owned, got);
        for (String member : group) {
          Set<TopicPartition> mine = new HashSet<>(got.get(member).partitions());
          assertTrue(mine.containsAll(shared), member + " gets every shared partition: " + mine);
          mine.removeAll(shared);
          assertEquals(new HashSet<>(oracle.get(member).partitions()), mine, member + "'s basket partitions, round "
              + generation);
          owned.put(member, got.get(member).partitions());
          oracleOwned.put(member, oracle.get(member).partitions());
        }
      }
      // after the second round every basket partition has exactly one owner
      List<TopicPartition> baskets = new ArrayList<>();
      owned.values().forEach(list -> list.stream().filter(tp -> !shared.contains(tp)).forEach(baskets::add));
      assertEquals(basketPartitions + 2, baskets.size(), "every basket partition once: " + owned);
      assertEquals(basketPartitions + 2, new HashSet<>(baskets).size(), "no basket partition twice: " + owned);
    }
  }

  /** No partition is newly given to a member while another member owned it before this round. */
  private static void checkCooperative(Map<String, List<TopicPartition>> before, Map<String, Assignment> after) {
    Set<TopicPartition> revoked = new HashSet<>();
    Set<TopicPartition> added = new HashSet<>();
    after.forEach((member, a) -> {
      List<TopicPartition> had = before.getOrDefault(member, List.of());
      a.partitions().stream().filter(tp -> !had.contains(tp)).forEach(added::add);
      had.stream().filter(tp -> !a.partitions().contains(tp)).forEach(revoked::add);
    });
    added.retainAll(revoked);
    assertTrue(added.isEmpty(), "partitions moved without being revoked first: " + added);
  }

  private static Cluster cluster(Map<String, Integer> topics) {
    List<PartitionInfo> partitions = new ArrayList<>();
    topics.forEach((topic, count) -> {
      for (int p = 0; p < count; p++) {
        partitions.add(new PartitionInfo(topic, p, NODE, new Node[] {NODE}, new Node[] {NODE}));
      }
    });
    return new Cluster("c", List.of(NODE), partitions, Set.of(), Set.of());
  }

  private static Set<TopicPartition> partitionsOf(Cluster cluster, String... topics) {
    Set<TopicPartition> out = new HashSet<>();
    for (String topic : topics) {
      cluster.partitionsForTopic(topic).forEach(info -> out.add(new TopicPartition(topic, info.partition())));
    }
    return out;
  }
}
