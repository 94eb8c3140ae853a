package dev.heapherd.metrics;

import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.input.PoolFileReader;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;

class WorkloadEstimatorTest {

  private static PodSignals pod(String name, double liveBytes, double heapBytes, Set<String> gcs) {
    Map<Signal, Double> v = new EnumMap<>(Signal.class);
    v.put(Signal.LIVE_BYTES, liveBytes);
    v.put(Signal.HEAP_MAX_BYTES, heapBytes);
    v.put(Signal.NON_HEAP_BYTES, 90e6);
    v.put(Signal.YOUNG_GC_SECONDS_PER_SECOND, 0.01);
    v.put(Signal.OLD_GC_SECONDS_PER_SECOND, 0.002);
    v.put(Signal.SAMPLE_COUNT, 60.0);
    return new PodSignals("shop", name, v, false, gcs, 0.01);
  }

  private static final String GC_SOURCE = "GC time: pause durations";

  private static final Set<String> G1 = Set.of("G1 Young Generation", "G1 Old Generation");

  @Test
  void medianLiveMeanRatesMaxNonHeapAndTheYoungPartKeptApart() {
    var estimate =
        WorkloadEstimator.estimate(
            "orders",
            "Deployment",
            List.of(
                pod("a", 100e6, 512e6, G1), pod("b", 300e6, 512e6, G1), pod("c", 200e6, 512e6, G1)),
            GC_SOURCE);
    assertThat(estimate).isInstanceOf(WorkloadEstimator.Measured.class);
    var w = ((WorkloadEstimator.Measured) estimate).workload();
    assertThat(w.liveBytes()).isEqualTo(200_000_000L);
    assertThat(w.replicas()).isEqualTo(3);
    assertThat(w.collector()).isEqualTo("G1");
    assertThat(w.gcSecondsPerSecond())
        .isEqualTo(0.012, org.assertj.core.api.Assertions.within(1e-12));
    assertThat(w.youngGcSecondsPerSecond()).isEqualTo(0.01);
    assertThat(w.evidence().confidence()).isEqualTo("High");
    assertThat(w.evidence().notes()).contains(GC_SOURCE);
  }

  @Test
  void parallelsOldTimeComesFromItsPaceAndSaysSo() {
    PodSignals base = pod("a", 1e8, 450e6, Set.of("PS Scavenge", "PS MarkSweep"));
    Map<Signal, Double> v = new EnumMap<>(base.values());
    // 0.002 s/s in 0.01 collections per second: a 200 ms pause. 1 MB/s into 200 MB of room: one
    // collection every 200 s, so 0.001 s/s, half what the window counted.
    v.put(Signal.OLD_COLLECTIONS_PER_SECOND, 0.01);
    v.put(Signal.PROMOTION_BYTES_PER_SECOND, 1e6);
    v.put(Signal.OLD_CAPACITY_BYTES, 3e8);
    var estimate =
        WorkloadEstimator.estimate(
            "ledger",
            "Deployment",
            List.of(new PodSignals("shop", "a", v, false, base.collectorNames(), 0)),
            GC_SOURCE);
    var w = ((WorkloadEstimator.Measured) estimate).workload();
    assertThat(w.gcSecondsPerSecond())
        .isEqualTo(0.011, org.assertj.core.api.Assertions.within(1e-12));
    assertThat(w.youngGcSecondsPerSecond()).isEqualTo(0.01);
    assertThat(w.evidence().notes()).anyMatch(n -> n.contains("from its pace"));
  }

  @Test
  void holdsOnMixedHeapsMixedCollectorsAndTooFewSamples() {
    assertThat(
            WorkloadEstimator.estimate(
                "orders",
                "Deployment",
                List.of(pod("a", 1e8, 512e6, G1), pod("b", 1e8, 768e6, G1)),
                GC_SOURCE))
        .isInstanceOfSatisfying(
            WorkloadEstimator.Held.class, h -> assertThat(h.reason()).contains("rollout"));
    assertThat(
            WorkloadEstimator.estimate(
                "orders",
                "Deployment",
                List.of(pod("a", 1e8, 512e6, G1), pod("b", 1e8, 512e6, Set.of("PS Scavenge"))),
                GC_SOURCE))
        .isInstanceOfSatisfying(
            WorkloadEstimator.Held.class,
            h -> assertThat(h.reason()).contains("collector unknown"));
    PodSignals sparse = pod("a", 1e8, 512e6, G1);
    Map<Signal, Double> v = new EnumMap<>(sparse.values());
    v.put(Signal.SAMPLE_COUNT, 3.0);
    assertThat(
            WorkloadEstimator.estimate(
                "orders",
                "Deployment",
                List.of(new PodSignals("shop", "a", v, false, G1, 0)),
                GC_SOURCE))
        .isInstanceOfSatisfying(
            WorkloadEstimator.Held.class, h -> assertThat(h.reason()).contains("3 samples"));
  }

  @Test
  void holdsAWorkloadThatSpendsMoreThanAllOfEachSecondInGc() {
    PodSignals doubled = pod("a", 1e8, 512e6, G1);
    Map<Signal, Double> v = new EnumMap<>(doubled.values());
    v.put(Signal.YOUNG_GC_SECONDS_PER_SECOND, 0.9);
    v.put(Signal.OLD_GC_SECONDS_PER_SECOND, 0.3);
    assertThat(
            WorkloadEstimator.estimate(
                "orders",
                "Deployment",
                List.of(new PodSignals("shop", "a", v, false, G1, 0)),
                GC_SOURCE))
        .isInstanceOfSatisfying(
            WorkloadEstimator.Held.class,
            h -> assertThat(h.reason()).contains("1.200 seconds per second is above 1"));
  }

  @Test
  void holdsAWorkloadWhoseLiveSetIsStillGrowing() {
    PodSignals steady = pod("a", 1e8, 512e6, G1);
    PodSignals growing =
        new PodSignals(
            "shop", "b", steady.values(), false, G1, WorkloadEstimator.MAX_LIVE_GROWTH + 0.1);
    assertThat(
            WorkloadEstimator.estimate("orders", "Deployment", List.of(steady, growing), GC_SOURCE))
        .isInstanceOfSatisfying(
            WorkloadEstimator.Held.class,
            h ->
                assertThat(h.reason())
                    .contains("pod b grew 30%")
                    .contains("warming up or leaking"));
  }

  @Test
  void collectorNamesFollowHotSpotBeanNames() {
    // GarbageCollectorMXBean names as HotSpot reports them (from memory of JDK 17's beans).
    assertThat(
            WorkloadEstimator.collector(
                List.of(pod("a", 1, 2, Set.of("Copy", "MarkSweepCompact")))))
        .contains("Serial");
    assertThat(
            WorkloadEstimator.collector(
                List.of(pod("a", 1, 2, Set.of("PS Scavenge", "PS MarkSweep")))))
        .contains("Parallel");
    assertThat(
            WorkloadEstimator.collector(
                List.of(pod("a", 1, 2, Set.of("ZGC Cycles", "ZGC Pauses")))))
        .contains("ZGC");
  }

  @Test
  void podNamesMapToTheirOwners() {
    assertThat(PodOwners.of("route-planner-7d9f8c6b5-x2x7q"))
        .contains(new PodOwners.Owner("Deployment", "route-planner"));
    assertThat(PodOwners.of("billing-ledger-12"))
        .contains(new PodOwners.Owner("StatefulSet", "billing-ledger"));
    assertThat(PodOwners.of("standalone")).isEmpty();
  }

  @Test
  void poolFilesNameTheSignalsAndProfilesThatExist() {
    assertThat(PoolFileReader.SIGNALS)
        .isEqualTo(Arrays.stream(Signal.values()).map(Signal::key).collect(Collectors.toSet()));
    assertThat(QueryProfiles.all())
        .extracting(QueryProfile::name)
        .containsExactlyInAnyOrderElementsOf(PoolFileReader.PROFILES);
  }
}
