package org.pairpulse.ingest.kafka;

import java.nio.ByteBuffer;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Collectors;
import org.apache.kafka.clients.consumer.ConsumerGroupMetadata;
import org.apache.kafka.clients.consumer.ConsumerPartitionAssignor;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.common.Cluster;
import org.apache.kafka.common.Configurable;
import org.apache.kafka.common.TopicPartition;

/**
 * The group's partition assignor in group mode: the basket topics are spread exactly as Kafka's cooperative sticky
 * assignor spreads them (it decides, on the basket topics alone), and every partition of the <em>shared topics</em>
 * (the state topic, the alert-state topic) goes to every member. So one subscribed consumer per instance reads its
 * own basket partitions and all of the group's compacted state; no second consumer without a group is needed.
 *
 * <h2>Why Kafka accepts it</h2>
 * The classic group protocol ({@code group.protocol=classic}) does not look inside the assignment the leader's
 * assignor returns: the broker stores and hands out each member's bytes. The client checks two things, and both
 * hold. A member's assignment must match its subscription (each member subscribes to the shared topics too). With
 * the cooperative protocol, the leader checks that no partition is added to one member while it is revoked from
 * another in the same round: a shared partition is never revoked while its member stays, so only the basket
 * partitions move, and the sticky assignor moves them in the two cooperative rounds as it always does.
 *
 * <h2>What the members do with it</h2>
 * Offsets are committed for basket partitions only (the checkpoint transaction); the shared partitions are sought
 * by the instance ({@link StateTap}) when they are first assigned, so a committed offset is never asked of them.
 * Every member of one group must run this assignor (an instance of an earlier version, with the plain cooperative
 * sticky assignor, cannot join the same group: stop the old instances before starting new ones).
 *
 * <p>Configured through the consumer's properties: {@value #SHARED_TOPICS} lists the shared topics.
 */
public final class SharedTopicsAssignor implements ConsumerPartitionAssignor, Configurable {
  /** Consumer property: the topics whose every partition goes to every member (comma separated). */
  public static final String SHARED_TOPICS = "pairpulse.shared.topics";

  private final CooperativeStickyAssignor baskets = new CooperativeStickyAssignor();
  private Set<String> shared = Set.of();

  @Override
  public void configure(Map<String, ?> configs) {
    Object value = configs.get(SHARED_TOPICS);
    if (value != null && !value.toString().isBlank()) {
      shared = Set.of(value.toString().split(","));
    }
  }

  @Override
  public String name() {
    return "pairpulse-shared-topics";
  }

  @Override
  public List<RebalanceProtocol> supportedProtocols() {
    return baskets.supportedProtocols();
  }

  @Override
  public ByteBuffer subscriptionUserData(Set<String> topics) {
    return baskets.subscriptionUserData(basketTopics(topics));
  }

  @Override
  public GroupAssignment assign(Cluster metadata, GroupSubscription group) {
    Map<String, Subscription> basketOnly = new HashMap<>();
    group.groupSubscription().forEach((member, s) -> {
      Subscription narrowed = new Subscription(new ArrayList<>(basketTopics(s.topics())), s.userData(),
          s.ownedPartitions().stream().filter(tp -> !shared.contains(tp.topic())).toList(), s.generationId().orElse(-1),
          s.rackId());
      narrowed.setGroupInstanceId(s.groupInstanceId());
      basketOnly.put(member, narrowed);
    });
    Map<String, Assignment> spread = baskets.assign(metadata, new GroupSubscription(basketOnly)).groupAssignment();
    Map<String, Assignment> out = new HashMap<>();
    spread.forEach((member, a) -> {
      List<TopicPartition> partitions = new ArrayList<>(a.partitions());
      for (String topic : group.groupSubscription().get(member).topics()) {
        if (shared.contains(topic)) {
          List<org.apache.kafka.common.PartitionInfo> infos = metadata.partitionsForTopic(topic);
          infos.forEach(info -> partitions.add(new TopicPartition(topic, info.partition())));
        }
      }
      out.put(member, new Assignment(partitions, a.userData()));
    });
    return new GroupAssignment(out);
  }

  @Override
  public void onAssignment(Assignment assignment, ConsumerGroupMetadata metadata) {
    baskets.onAssignment(new Assignment(assignment.partitions().stream().filter(tp -> !shared.contains(tp.topic()))
        .toList(), assignment.userData()), metadata);
  }

  private Set<String> basketTopics(java.util.Collection<String> topics) {
    return topics.stream().filter(t -> !shared.contains(t)).collect(Collectors.toSet());
  }
}
