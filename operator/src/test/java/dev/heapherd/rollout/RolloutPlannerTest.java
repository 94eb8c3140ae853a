package dev.heapherd.rollout;

import static org.assertj.core.api.Assertions.assertThat;

import dev.heapherd.input.Quantity;
import dev.heapherd.rollout.RolloutPlanner.Gates;
import dev.heapherd.rollout.RolloutPlanner.Target;
import dev.heapherd.rollout.RolloutStep.Finish;
import dev.heapherd.rollout.RolloutStep.Hold;
import dev.heapherd.rollout.RolloutStep.Rail;
import dev.heapherd.rollout.RolloutStep.RollBack;
import dev.heapherd.rollout.RolloutStep.Start;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalLong;
import java.util.Random;
import java.util.Set;
import java.util.stream.Collectors;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.constraints.IntRange;
import org.junit.jupiter.api.Test;

/**
 * The rollout planner on Larkspur Freight's pricing pool: quote-api, route-planner, invoice-batch
 * and friends. Sizes are whole MiB, as the engine proposes them.
 */
class RolloutPlannerTest {

  private static final long MIB = 1024L * 1024L;
  private static final long GIB = 1024L * MIB;

  private static final Instant NOW = Instant.parse("2025-03-04T10:00:00Z");

  private static final String SHRINK_FIRST = "waits until the workloads that shrink have rolled";

  /** Names for the random pools' workloads, in order. */
  private static final List<String> SERVICES =
      List.of(
          "quote-api",
          "route-planner",
          "invoice-batch",
          "tracking-feed",
          "fleet-registry",
          "customs-docs",
          "rate-cache",
          "driver-gateway");

  /** One workload, steady and fully rolled out unless told otherwise. */
  private static final class Service {
    private final String name;
    private int replicas = 4;
    // 4 replicas at Kubernetes' default maxSurge of 25%, rounded up, give 1 surge pod
    // (Deployment documentation, "Max Surge").
    private int surge = 1;
    private long limitMib = 1024;
    private long othersMib;
    private long heapMib = 768;
    private boolean optedOut;
    private RolloutRecord inFlight;
    private boolean done = true;
    private String failure;
    private boolean rolledBack;
    private Instant changedAt;

    private Service(String name) {
      this.name = name;
    }

    Service pods(int replicas, int surge) {
      this.replicas = replicas;
      this.surge = surge;
      return this;
    }

    Service limit(long mib) {
      this.limitMib = mib;
      return this;
    }

    Service sidecars(long mib) {
      this.othersMib = mib;
      return this;
    }

    Service heap(long mib) {
      this.heapMib = mib;
      return this;
    }

    Service optedOut() {
      this.optedOut = true;
      return this;
    }

    Service rolledBack() {
      this.rolledBack = true;
      return this;
    }

    Service changedAt(Instant at) {
      this.changedAt = at;
      return this;
    }

    /** heapherd changed the container's limit from {@code previousLimit} to the current one. */
    Service rollingFrom(String previousLimit, String previousOptions) {
      this.inFlight =
          new RolloutRecord(
              "proposal-3f9c",
              previousLimit,
              null,
              previousOptions,
              heapMib * MIB,
              limitMib * MIB,
              NOW.minusSeconds(120).toString(),
              false);
      this.done = false;
      return this;
    }

    Service done() {
      this.done = true;
      return this;
    }

    /** heapherd wrote the previous values back; their rollout runs. */
    Service rollingBack() {
      this.inFlight = inFlight.rolledBack();
      this.done = false;
      return this;
    }

    Service failing(String reason) {
      this.failure = reason;
      return this;
    }

    WorkloadState state() {
      return new WorkloadState(
          name,
          replicas,
          surge,
          (limitMib + othersMib) * MIB,
          othersMib * MIB,
          heapMib * MIB,
          optedOut,
          Optional.ofNullable(inFlight),
          done,
          Optional.ofNullable(failure),
          rolledBack,
          Optional.ofNullable(changedAt));
    }
  }

  private static Service service(String name) {
    return new Service(name);
  }

  /** The pool-wide gates, all open unless told otherwise. */
  private static final class Rails {
    private boolean approved = true;
    private boolean frozen;
    private String metricsHeld = "";
    private long maxRolling = 2;
    private final long cooldownSeconds = 3600;
    private final long thresholdPercent = 5;
    private OptionalLong budget = OptionalLong.empty();

    Rails notApproved() {
      approved = false;
      return this;
    }

    Rails frozen() {
      frozen = true;
      return this;
    }

    Rails metricsHeld(String reason) {
      metricsHeld = reason;
      return this;
    }

    Rails maxRolling(long n) {
      maxRolling = n;
      return this;
    }

    Rails budget(long bytes) {
      budget = OptionalLong.of(bytes);
      return this;
    }

    Gates gates() {
      return new Gates(
          approved,
          frozen,
          metricsHeld,
          maxRolling,
          cooldownSeconds,
          thresholdPercent,
          budget,
          NOW);
    }
  }

  private static Rails rails() {
    return new Rails();
  }

  private static Target target(long heapMib, long limitMib) {
    return new Target(heapMib * MIB, limitMib * MIB);
  }

  private static List<RolloutStep> decide(
      List<Service> services, Map<String, Target> targets, Rails rails) {
    return RolloutPlanner.decide(
        services.stream().map(Service::state).toList(), targets, rails.gates());
  }

  private static List<RolloutStep> decide(Service service, Target target, Rails rails) {
    return decide(List.of(service), Map.of(service.name, target), rails);
  }

  private static Start start(String name, long heapMib, long limitMib, boolean grows) {
    return new Start(name, heapMib * MIB, limitMib * MIB, grows);
  }

  private static Hold hold(String name, Rail rail, String message) {
    return new Hold(name, rail, message);
  }

  /** The rail of a hold; null for any other step, so an unexpected start fails the assertion. */
  private static Rail railOf(RolloutStep step) {
    return step instanceof Hold h ? h.rail() : null;
  }

  // In flight: failures, finishes, and the round they own.

  @Test
  void anInFlightWorkloadWithAFailureRollsBack() {
    Service quoteApi =
        service("quote-api")
            .rollingFrom("1280Mi", "-Xmx1g")
            .failing("pod quote-api-6b7f9-x2k4q was OOMKilled");

    assertThat(decide(List.of(quoteApi), Map.of(), rails()))
        .containsExactly(new RollBack("quote-api", "pod quote-api-6b7f9-x2k4q was OOMKilled"));
  }

  @Test
  void aFailureRollsBackEvenWhenTheControllerReportsDone() {
    Service quoteApi =
        service("quote-api")
            .rollingFrom("1280Mi", "-Xmx1g")
            .done()
            .failing("pod quote-api-6b7f9-x2k4q restarted 3 times");

    assertThat(decide(List.of(quoteApi), Map.of(), rails()))
        .containsExactly(new RollBack("quote-api", "pod quote-api-6b7f9-x2k4q restarted 3 times"));
  }

  @Test
  void aDoneInFlightWorkloadFinishes() {
    Service quoteApi = service("quote-api").rollingFrom("1280Mi", "-Xmx1g").done();

    assertThat(decide(List.of(quoteApi), Map.of(), rails()))
        .containsExactly(new Finish("quote-api"));
  }

  @Test
  void aRollbackThatIsStillRollingIgnoresFailuresAndFillsASlot() {
    Service quoteApi =
        service("quote-api")
            .rollingFrom("1280Mi", "-Xmx1g")
            .rollingBack()
            .failing("pod quote-api-6b7f9-x2k4q was OOMKilled");
    Service routePlanner = service("route-planner").limit(2048).heap(1536);

    assertThat(
            decide(
                List.of(quoteApi, routePlanner),
                Map.of("route-planner", target(1024, 1536)),
                rails().maxRolling(1)))
        .singleElement()
        .isInstanceOf(RolloutStep.Hold.class)
        .extracting(h -> ((RolloutStep.Hold) h).rail())
        .isEqualTo(RolloutStep.Rail.RollingLimit);
  }

  @Test
  void aFinishedRollbackFinishes() {
    Service quoteApi = service("quote-api").rollingFrom("1280Mi", "-Xmx1g").rollingBack().done();

    assertThat(decide(List.of(quoteApi), Map.of(), rails()))
        .containsExactly(new Finish("quote-api"));
  }

  @Test
  void aRollbackCountsTheLargerOfBothLimitsForEveryPodAndSurgePod() {
    // Back from 1024Mi to 1280Mi: 4 pods and 1 surge pod at 1280Mi.
    Service quoteApi = service("quote-api").rollingFrom("1280Mi", "-Xmx1g").rollingBack();

    assertThat(RolloutPlanner.committedBytes(quoteApi.state())).isEqualTo(5 * 1280 * MIB);
  }

  @Test
  void aRolloutSomeoneElseStartedCountsItsSurgePods() {
    Service quoteApi = service("quote-api");
    quoteApi.done = false;

    assertThat(RolloutPlanner.committedBytes(quoteApi.state())).isEqualTo(5 * 1024 * MIB);
  }

  @Test
  void anInFlightWorkloadStillRollingGetsNoStep() {
    Service quoteApi = service("quote-api").rollingFrom("1280Mi", "-Xmx1g");

    // A newer proposal for it waits until this rollout is over.
    assertThat(decide(quoteApi, target(512, 768), rails())).isEmpty();
  }

  @Test
  void nothingStartsInARoundThatFinishesOrRollsBack() {
    Service invoiceBatch =
        service("invoice-batch").rollingFrom("2Gi", "-Xmx1536m").failing("pod is crash-looping");
    Service quoteApi = service("quote-api").rollingFrom("1280Mi", "-Xmx1g").done();
    Service routePlanner = service("route-planner").limit(2048).heap(1536);
    Service trackingFeed = service("tracking-feed").optedOut();

    List<RolloutStep> steps =
        decide(
            List.of(invoiceBatch, quoteApi, routePlanner, trackingFeed),
            Map.of("route-planner", target(1024, 1536), "tracking-feed", target(512, 768)),
            rails().maxRolling(5));

    assertThat(steps)
        .containsExactly(
            new RollBack("invoice-batch", "pod is crash-looping"), new Finish("quote-api"));
  }

  @Test
  void aFinishAloneAlsoStopsStarts() {
    Service quoteApi = service("quote-api").rollingFrom("1280Mi", "-Xmx1g").done();
    Service routePlanner = service("route-planner").limit(2048).heap(1536);

    assertThat(
            decide(
                List.of(quoteApi, routePlanner),
                Map.of("route-planner", target(1024, 1536)),
                rails().maxRolling(5)))
        .containsExactly(new Finish("quote-api"));
  }

  // Workloads with nothing to do.

  @Test
  void anInSyncWorkloadGetsNoStep() {
    Service quoteApi = service("quote-api").limit(1024).heap(768).sidecars(128);

    // The target names the JVM container's limit; the sidecar's 128Mi is not part of it.
    assertThat(decide(quoteApi, target(768, 1024), rails())).isEmpty();
  }

  @Test
  void aWorkloadWithoutATargetGetsNoStep() {
    assertThat(decide(List.of(service("quote-api")), Map.of(), rails())).isEmpty();
  }

  @Test
  void aWorkloadWithoutATargetGetsNoStepEvenWhenItsRailsAreShut() {
    Service quoteApi = service("quote-api").optedOut();

    assertThat(decide(List.of(quoteApi), Map.of(), rails().notApproved().frozen())).isEmpty();
  }

  // Rails that hold one workload.

  @Test
  void anOptedOutWorkloadIsHeld() {
    assertThat(decide(service("quote-api").optedOut(), target(1024, 1536), rails()))
        .containsExactly(hold("quote-api", Rail.OptedOut, "carries the opt-out annotation"));
  }

  @Test
  void aRolledBackWorkloadIsHeld() {
    assertThat(decide(service("quote-api").rolledBack(), target(1024, 1536), rails()))
        .containsExactly(
            hold(
                "quote-api",
                Rail.RolledBack,
                "was rolled back; held until its pod template changes"));
  }

  @Test
  void untrustedMetricsHoldWithTheirReason() {
    String reason = "metrics for quote-api are 14 minutes old";

    assertThat(decide(service("quote-api"), target(1024, 1536), rails().metricsHeld(reason)))
        .containsExactly(hold("quote-api", Rail.MetricsHeld, reason));
  }

  @Test
  void anUnapprovedProposalIsHeld() {
    assertThat(decide(service("quote-api"), target(1024, 1536), rails().notApproved()))
        .containsExactly(
            hold("quote-api", Rail.NotApproved, "the current proposal is not approved"));
  }

  @Test
  void anOpenFreezeWindowHolds() {
    assertThat(decide(service("quote-api"), target(1024, 1536), rails().frozen()))
        .containsExactly(hold("quote-api", Rail.Frozen, "a freeze window is open"));
  }

  @Test
  void aChangeBelowTheThresholdIsHeld() {
    Service quoteApi = service("quote-api").heap(1000).limit(1280);

    // 40 MiB of 1000 MiB is 4.0%, under the 5% threshold.
    assertThat(decide(quoteApi, target(1040, 1312), rails()))
        .containsExactly(
            hold("quote-api", Rail.BelowThreshold, "a 4.0% heap change is below the 5% threshold"));
  }

  @Test
  void theThresholdMessageDoesNotDependOnTheDefaultLocale() {
    Service quoteApi = service("quote-api").heap(1000).limit(1280);
    Locale before = Locale.getDefault();
    List<RolloutStep> steps;
    try {
      // German formats 4.0 as "4,0"; status messages must read the same everywhere.
      Locale.setDefault(Locale.GERMANY);
      steps = decide(quoteApi, target(1040, 1312), rails());
    } finally {
      Locale.setDefault(before);
    }

    assertThat(steps)
        .containsExactly(
            hold("quote-api", Rail.BelowThreshold, "a 4.0% heap change is below the 5% threshold"));
  }

  @Test
  void aChangeExactlyAtTheThresholdStarts() {
    Service quoteApi = service("quote-api").heap(1000).limit(1280);

    assertThat(decide(quoteApi, target(1050, 1312), rails()))
        .containsExactly(start("quote-api", 1050, 1312, true));
  }

  @Test
  void aLimitChangeAtTheThresholdStartsThoughTheHeapBarelyMoves() {
    // A new limit margin: the heap moves 0.4%, the limit 1280 -> 1100 MiB (14.1%). Holding it
    // would keep 180 MiB the plan gave to others, and their growth could never fit the budget.
    Service quoteApi = service("quote-api").heap(1000).limit(1280);

    assertThat(decide(quoteApi, target(996, 1100), rails()))
        .containsExactly(start("quote-api", 996, 1100, false));
  }

  @Test
  void aSmallLimitChangeIsNamedWhenItIsTheLargerOne() {
    Service quoteApi = service("quote-api").heap(1000).limit(1280);

    // Heap 1000 -> 1004 MiB is 0.4%, limit 1280 -> 1320 MiB is 3.1%: both under 5%.
    assertThat(decide(quoteApi, target(1004, 1320), rails()))
        .containsExactly(
            hold(
                "quote-api",
                Rail.BelowThreshold,
                "a 3.1% limit change (heap 0.4%) is below the 5% threshold"));
  }

  @Test
  void aWorkloadWithoutAHeapFlagIsNeverBelowTheThreshold() {
    Service quoteApi = service("quote-api").heap(0).limit(1280);

    assertThat(decide(quoteApi, target(960, 1280), rails()))
        .containsExactly(start("quote-api", 960, 1280, false));
  }

  @Test
  void aRecentlyChangedWorkloadCoolsDown() {
    Service quoteApi = service("quote-api").changedAt(NOW.minusSeconds(1680));

    // The rails' cooldown is 3600 s; 1680 s have passed.
    assertThat(decide(quoteApi, target(1024, 1536), rails()))
        .containsExactly(
            hold("quote-api", Rail.Cooldown, "changed recently; cooldown ends in 1920 s"));
  }

  @Test
  void theCooldownEndsExactlyAfterItsLength() {
    Service quoteApi = service("quote-api").changedAt(NOW.minusSeconds(3600));

    assertThat(decide(quoteApi, target(1024, 1536), rails()))
        .containsExactly(start("quote-api", 1024, 1536, true));
  }

  @Test
  void theFirstRailThatAppliesIsTheOneReported() {
    Target t = target(1024, 1536);
    Service everything =
        service("quote-api").optedOut().rolledBack().changedAt(NOW.minusSeconds(60));
    Service notOptedOut = service("quote-api").rolledBack().changedAt(NOW.minusSeconds(60));
    Rails shut = rails().metricsHeld("no metrics").notApproved().frozen();

    assertThat(decide(everything, t, shut))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.OptedOut);
    assertThat(decide(notOptedOut, t, shut))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.RolledBack);
    assertThat(decide(service("quote-api"), t, shut))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.MetricsHeld);
    assertThat(decide(service("quote-api"), t, rails().notApproved().frozen()))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.NotApproved);
    // 768Mi -> 784Mi is a 2.1% change.
    Service smallAndCooling = service("quote-api").changedAt(NOW.minusSeconds(60));
    assertThat(decide(smallAndCooling, target(784, 1024), rails().frozen()))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.Frozen);
    assertThat(decide(smallAndCooling, target(784, 1024), rails()))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.BelowThreshold);
  }

  @Test
  void aHeldWorkloadDoesNotStopTheOthers() {
    Service quoteApi = service("quote-api").optedOut();
    Service routePlanner = service("route-planner").limit(2048).heap(1536);

    assertThat(
            decide(
                List.of(quoteApi, routePlanner),
                Map.of("quote-api", target(1024, 1536), "route-planner", target(1024, 1536)),
                rails()))
        .containsExactly(
            hold("quote-api", Rail.OptedOut, "carries the opt-out annotation"),
            start("route-planner", 1024, 1536, false));
  }

  // Shrinks before grows.

  @Test
  void shrinksStartBeforeGrows() {
    Service quoteApi = service("quote-api").limit(1024).heap(768);
    Service routePlanner = service("route-planner").limit(2048).heap(1536);

    List<RolloutStep> steps =
        decide(
            List.of(quoteApi, routePlanner),
            Map.of("quote-api", target(1152, 1536), "route-planner", target(1024, 1536)),
            rails().maxRolling(5));

    assertThat(steps)
        .containsExactly(
            start("route-planner", 1024, 1536, false),
            hold("quote-api", Rail.ShrinkFirst, SHRINK_FIRST));
  }

  @Test
  void growsWaitWhileAShrinkIsInFlight() {
    // route-planner was lowered from 2Gi to 1536Mi and is still rolling.
    Service routePlanner =
        service("route-planner").limit(1536).heap(1024).rollingFrom("2Gi", "-Xmx1536m");
    Service quoteApi = service("quote-api");

    assertThat(
            decide(
                List.of(routePlanner, quoteApi),
                Map.of("quote-api", target(1152, 1536)),
                rails().maxRolling(5)))
        .containsExactly(hold("quote-api", Rail.ShrinkFirst, SHRINK_FIRST));
  }

  @Test
  void growsStartWhileAnotherGrowIsInFlight() {
    Service routePlanner =
        service("route-planner").limit(2048).heap(1536).rollingFrom("1536Mi", "-Xmx1g");
    Service quoteApi = service("quote-api");

    assertThat(
            decide(
                List.of(routePlanner, quoteApi),
                Map.of("quote-api", target(1152, 1536)),
                rails().maxRolling(5)))
        .containsExactly(start("quote-api", 1152, 1536, true));
  }

  @Test
  void aShrinkHeldByARailDoesNotHoldTheGrows() {
    Service routePlanner = service("route-planner").limit(2048).heap(1536).optedOut();
    Service quoteApi = service("quote-api");

    assertThat(
            decide(
                List.of(routePlanner, quoteApi),
                Map.of("route-planner", target(1024, 1536), "quote-api", target(1152, 1536)),
                rails()))
        .containsExactly(
            hold("route-planner", Rail.OptedOut, "carries the opt-out annotation"),
            start("quote-api", 1152, 1536, true));
  }

  @Test
  void aShrinkWaitingOnTheBudgetStillHoldsTheGrows() {
    // route-planner's shrink needs 10Gi while rolling and the budget is 1Mi short of that;
    // quote-api's grow alone would fit, but it must not take the room the shrink waits for.
    Service routePlanner = service("route-planner").pods(2, 1).limit(2048).heap(1536);
    Service quoteApi = service("quote-api").pods(4, 1);

    assertThat(
            decide(
                List.of(routePlanner, quoteApi),
                Map.of("route-planner", target(1024, 1536), "quote-api", target(864, 1152)),
                rails().budget(10 * GIB - MIB)))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.Budget, Rail.ShrinkFirst);
  }

  @Test
  void sidecarsDoNotMakeASameSizeTargetAGrow() {
    // The pod limit includes a 256Mi sidecar; the target names only the JVM container.
    Service quoteApi = service("quote-api").limit(1024).heap(512).sidecars(256);

    assertThat(decide(quoteApi, target(768, 1024), rails()))
        .containsExactly(start("quote-api", 768, 1024, false));
  }

  // How many roll at once.

  @Test
  void atMostMaxRollingWorkloadsStartAndTheBiggestShrinksGoFirst() {
    Service quoteApi = service("quote-api").limit(1536).heap(1152);
    Service routePlanner = service("route-planner").limit(3072).heap(2304);
    Service invoiceBatch = service("invoice-batch").limit(2048).heap(1536);

    List<RolloutStep> steps =
        decide(
            List.of(quoteApi, routePlanner, invoiceBatch),
            Map.of(
                "quote-api", target(960, 1280),
                "route-planner", target(1536, 2048),
                "invoice-batch", target(1024, 1536)),
            rails().maxRolling(2));

    assertThat(steps)
        .containsExactly(
            start("route-planner", 1536, 2048, false),
            start("invoice-batch", 1024, 1536, false),
            hold("quote-api", Rail.RollingLimit, "waits: 2 of at most 2 rolling"));
  }

  @Test
  void inFlightWorkloadsCountTowardsTheRollingLimit() {
    Service routePlanner =
        service("route-planner").limit(2048).heap(1536).rollingFrom("1536Mi", "-Xmx1g");
    Service quoteApi = service("quote-api");

    assertThat(
            decide(
                List.of(routePlanner, quoteApi),
                Map.of("quote-api", target(1152, 1536)),
                rails().maxRolling(1)))
        .containsExactly(hold("quote-api", Rail.RollingLimit, "waits: 1 of at most 1 rolling"));
  }

  @Test
  void theSmallestGrowGoesFirst() {
    Service quoteApi = service("quote-api");
    Service routePlanner = service("route-planner");

    assertThat(
            decide(
                List.of(quoteApi, routePlanner),
                Map.of("quote-api", target(1536, 2048), "route-planner", target(1152, 1536)),
                rails().maxRolling(1)))
        .containsExactly(
            start("route-planner", 1152, 1536, true),
            hold("quote-api", Rail.RollingLimit, "waits: 1 of at most 1 rolling"));
  }

  // The budget rail.

  /** quote-api grows from 1Gi to 1536Mi beside route-planner's steady 2 x 2Gi. */
  private static List<RolloutStep> quoteApiGrowsWithin(OptionalLong budget) {
    Service quoteApi = service("quote-api").pods(4, 1);
    Service routePlanner = service("route-planner").pods(2, 1).limit(2048).heap(1536);
    Rails rails = rails();
    rails.budget = budget;
    return decide(List.of(quoteApi, routePlanner), Map.of("quote-api", target(1152, 1536)), rails);
  }

  @Test
  void aRolloutWhoseSurgePodsWouldExceedTheBudgetIsHeld() {
    // Steady after the change: 4 x 1536Mi + 2 x 2Gi = 10Gi, inside 11Gi. While rolling, 4 + 1
    // pods at 1536Mi = 7680Mi beside route-planner's 4Gi reach 11776Mi = 11.5Gi.
    assertThat(quoteApiGrowsWithin(OptionalLong.of(11 * GIB)))
        .containsExactly(
            hold(
                "quote-api",
                Rail.Budget,
                "rolling it would let the pool's pods, surge pods counted, reach 11.50Gi, over"
                    + " the budget of 11Gi; lower the rolling update's surge or raise the"
                    + " budget"));
  }

  @Test
  void aRolloutWhosePeakFitsTheBudgetExactlyStarts() {
    assertThat(quoteApiGrowsWithin(OptionalLong.of(11776 * MIB)))
        .containsExactly(start("quote-api", 1152, 1536, true));
  }

  @Test
  void withoutABudgetThereIsNoBudgetHold() {
    assertThat(quoteApiGrowsWithin(OptionalLong.empty()))
        .containsExactly(start("quote-api", 1152, 1536, true));
  }

  @Test
  void aRolloutWithoutSurgeNeedsOnlyTheLargerLimit() {
    // A Recreate Deployment or a StatefulSet adds no pods: 4 x 1536Mi + 4Gi = 10Gi.
    Service quoteApi = service("quote-api").pods(4, 0);
    Service routePlanner = service("route-planner").pods(2, 1).limit(2048).heap(1536);

    assertThat(
            decide(
                List.of(quoteApi, routePlanner),
                Map.of("quote-api", target(1152, 1536)),
                rails().budget(10 * GIB)))
        .containsExactly(start("quote-api", 1152, 1536, true));
  }

  @Test
  void aShrinkNeedsRoomForItsSurgePodsAtTheOldLimit() {
    // 2 x 2Gi now; rolling to 1536Mi runs 3 pods at up to 2Gi each.
    Service routePlanner = service("route-planner").pods(2, 1).limit(2048).heap(1536);
    Map<String, Target> targets = Map.of("route-planner", target(1024, 1536));

    assertThat(decide(List.of(routePlanner), targets, rails().budget(6 * GIB - MIB)))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.Budget);
    assertThat(decide(List.of(routePlanner), targets, rails().budget(6 * GIB)))
        .containsExactly(start("route-planner", 1024, 1536, false));
  }

  @Test
  void sidecarsCountInTheRolloutsPeak() {
    // (4 + 1) x (1536Mi + 256Mi) = 8960Mi beside route-planner's 4Gi: 13056Mi.
    Service quoteApi = service("quote-api").pods(4, 1).sidecars(256);
    Service routePlanner = service("route-planner").pods(2, 1).limit(2048).heap(1536);
    Map<String, Target> targets = Map.of("quote-api", target(1152, 1536));

    assertThat(decide(List.of(quoteApi, routePlanner), targets, rails().budget(13056 * MIB - 1)))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.Budget);
    assertThat(decide(List.of(quoteApi, routePlanner), targets, rails().budget(13056 * MIB)))
        .containsExactly(start("quote-api", 1152, 1536, true));
  }

  @Test
  void anInFlightRolloutKeepsItsPeakUntilItFinishes() {
    // route-planner grows 1536Mi -> 2Gi with 2 + 1 pods: 6Gi until it finishes, not its 4Gi.
    Service routePlanner =
        service("route-planner").pods(2, 1).limit(2048).heap(1536).rollingFrom("1536Mi", "-Xmx1g");
    Service quoteApi = service("quote-api").pods(4, 1);
    Map<String, Target> targets = Map.of("quote-api", target(1152, 1536));

    // 6Gi + (4 + 1) x 1536Mi = 13824Mi.
    assertThat(decide(List.of(routePlanner, quoteApi), targets, rails().budget(13824 * MIB - 1)))
        .extracting(RolloutPlannerTest::railOf)
        .containsExactly(Rail.Budget);
    assertThat(decide(List.of(routePlanner, quoteApi), targets, rails().budget(13824 * MIB)))
        .containsExactly(start("quote-api", 1152, 1536, true));
  }

  @Test
  void startsInOneRoundShareTheBudget() {
    // Each shrink needs one surge pod's room at its old limit; the pool has room for one.
    Service routePlanner = service("route-planner").pods(2, 1).limit(2048).heap(1536);
    Service invoiceBatch = service("invoice-batch").pods(2, 1).limit(1536).heap(1152);
    Map<String, Target> targets =
        Map.of("route-planner", target(1024, 1536), "invoice-batch", target(960, 1280));
    // Steady 4Gi + 3Gi = 7Gi. route-planner, the bigger shrink, goes first and its third pod at
    // 2Gi brings the pool to 9Gi; invoice-batch's third pod at 1536Mi would then make 10.5Gi.
    long budget = 9 * GIB;

    List<RolloutStep> steps =
        decide(List.of(routePlanner, invoiceBatch), targets, rails().maxRolling(5).budget(budget));

    assertThat(steps).hasSize(2);
    assertThat(steps.get(0)).isEqualTo(start("route-planner", 1024, 1536, false));
    assertThat(steps.get(1))
        .isInstanceOfSatisfying(
            Hold.class,
            h -> {
              assertThat(h.workload()).isEqualTo("invoice-batch");
              assertThat(h.rail()).isEqualTo(Rail.Budget);
              assertThat(h.message()).contains("reach 10.50Gi, over the budget of 9Gi");
            });
  }

  // committedBytes, which the budget rail adds up.

  @Test
  void aSteadyWorkloadCommitsItsPods() {
    Service quoteApi = service("quote-api").pods(4, 1).limit(1024).sidecars(128);

    assertThat(RolloutPlanner.committedBytes(quoteApi.state())).isEqualTo(4 * 1152 * MIB);
  }

  @Test
  void aGrowingWorkloadCommitsEveryPodAtTheNewLimit() {
    Service quoteApi = service("quote-api").pods(4, 1).limit(1536).rollingFrom("1Gi", "-Xmx768m");

    assertThat(RolloutPlanner.committedBytes(quoteApi.state())).isEqualTo(5 * 1536 * MIB);
  }

  @Test
  void aShrinkingWorkloadCommitsEveryPodAtTheOldLimit() {
    Service quoteApi =
        service("quote-api").pods(4, 1).limit(1024).sidecars(128).rollingFrom("1536Mi", "-Xmx1g");

    assertThat(RolloutPlanner.committedBytes(quoteApi.state())).isEqualTo(5 * (1536 + 128) * MIB);
  }

  @Test
  void anUnsetPreviousLimitCountsAsTheCurrentOne() {
    Service quoteApi = service("quote-api").pods(4, 1).limit(1024).rollingFrom(null, null);

    assertThat(RolloutPlanner.committedBytes(quoteApi.state())).isEqualTo(5 * 1024 * MIB);
  }

  // The rails on many random pools, rolled to the end.

  /** One workload of a random pool: its sizes now and its target, in MiB. */
  record Spec(
      int replicas,
      int surge,
      long limitMib,
      long sidecarMib,
      int heapPercent,
      long targetLimitMib,
      int targetHeapPercent,
      boolean proposed) {

    long heapMib() {
      return limitMib * heapPercent / 100;
    }

    long targetHeapMib() {
      return targetLimitMib * targetHeapPercent / 100;
    }
  }

  @Provide
  Arbitrary<List<Spec>> pools() {
    // Limits in 64Mi steps from 256Mi to 4Gi, like the engine's whole-MiB proposals.
    Arbitrary<Long> limits = Arbitraries.longs().between(4, 64).map(n -> n * 64);
    Arbitrary<Spec> spec =
        Combinators.combine(
                Arbitraries.integers().between(1, 6),
                Arbitraries.integers().between(0, 3),
                limits,
                Arbitraries.of(0L, 64L, 128L, 256L),
                Arbitraries.integers().between(50, 80),
                limits,
                Arbitraries.integers().between(50, 80),
                Arbitraries.of(true, true, true, false))
            .as(Spec::new);
    return spec.list().ofMinSize(1).ofMaxSize(SERVICES.size());
  }

  @Property(tries = 400)
  void rollingARandomPoolNeverCommitsMoreThanTheBudget(
      @ForAll("pools") List<Spec> pool,
      @ForAll @IntRange(min = 1, max = 3) int maxRolling,
      @ForAll @IntRange(min = 0, max = 8192) int slackMib,
      @ForAll Random random) {
    Map<String, Service> services = new HashMap<>();
    Map<String, Target> targets = new HashMap<>();
    long steadyNow = 0;
    long steadyAfter = 0;
    for (int i = 0; i < pool.size(); i++) {
      Spec s = pool.get(i);
      String name = SERVICES.get(i);
      services.put(
          name,
          service(name)
              .pods(s.replicas(), s.surge())
              .limit(s.limitMib())
              .sidecars(s.sidecarMib())
              .heap(s.heapMib()));
      steadyNow += s.replicas() * (s.limitMib() + s.sidecarMib());
      if (s.proposed()) {
        targets.put(name, target(s.targetHeapMib(), s.targetLimitMib()));
        steadyAfter += s.replicas() * (s.targetLimitMib() + s.sidecarMib());
      } else {
        steadyAfter += s.replicas() * (s.limitMib() + s.sidecarMib());
      }
    }
    // Both the pool now and the pool at its targets fit; only the way between is in question.
    long budget = (Math.max(steadyNow, steadyAfter) + slackMib) * MIB;
    Gates gates = new Gates(true, false, "", maxRolling, 0, 0, OptionalLong.of(budget), NOW);
    List<String> names = SERVICES.subList(0, pool.size());

    List<RolloutStep> steps = List.of();
    boolean settled = false;
    for (int round = 0; round < 50 * pool.size() && !settled; round++) {
      List<WorkloadState> states = names.stream().map(n -> services.get(n).state()).toList();
      steps = RolloutPlanner.decide(states, targets, gates);
      for (RolloutStep step : steps) {
        apply(step, services.get(step.workload()), targets);
      }
      List<WorkloadState> after = names.stream().map(n -> services.get(n).state()).toList();
      assertThat(after.stream().mapToLong(RolloutPlanner::committedBytes).sum())
          .as("memory the pool's pods may hold after %s", steps)
          .isLessThanOrEqualTo(budget);
      assertThat(after.stream().filter(w -> w.inFlight().isPresent()).count())
          .as("workloads rolling after %s", steps)
          .isLessThanOrEqualTo(maxRolling);
      settled =
          steps.stream().allMatch(Hold.class::isInstance)
              && after.stream().allMatch(w -> w.inFlight().isEmpty());
      progress(names.stream().map(services::get).toList(), random);
    }

    assertThat(settled).as("the pool settles").isTrue();
    assertStuckOnlyOnTheBudget(names, services, targets, steps);
  }

  /** What the reconciler's writes do to the workload as the next observation sees it. */
  private static void apply(RolloutStep step, Service s, Map<String, Target> targets) {
    if (step instanceof Start start) {
      String previousLimit = s.limitMib + "Mi";
      String previousOptions = "-Xmx" + s.heapMib + "m";
      s.limitMib = start.limitBytes() / MIB;
      s.heapMib = start.heapBytes() / MIB;
      s.rollingFrom(previousLimit, previousOptions);
    } else if (step instanceof Finish) {
      s.inFlight = null;
      s.changedAt = NOW;
    } else if (step instanceof RollBack) {
      s.limitMib = Quantity.parseBytes(s.inFlight.previousLimit()) / MIB;
      s.heapMib = JvmOptions.maxHeapBytes(s.inFlight.previousJvmOptions()).orElseThrow() / MIB;
      s.inFlight = null;
      s.failure = null;
      s.done = true;
      s.rolledBack = true;
      s.changedAt = NOW;
    }
    assertThat(targets).containsKey(step.workload());
  }

  /** Between two visits, some rollouts finish and a few fail; at least one moves on. */
  private static void progress(List<Service> services, Random random) {
    List<Service> rolling =
        services.stream().filter(s -> s.inFlight != null && !s.done && s.failure == null).toList();
    boolean moved = false;
    for (Service s : rolling) {
      int roll = random.nextInt(10);
      if (roll == 0) {
        s.failing("pod " + s.name + "-6b7f9-x2k4q was OOMKilled");
        moved = true;
      } else if (roll < 5) {
        s.done();
        moved = true;
      }
    }
    if (!moved && !rolling.isEmpty()) {
      rolling.get(0).done();
    }
  }

  /**
   * Once settled, every proposed workload that is not at its target was rolled back or waits on the
   * budget, directly or behind a shrink that does.
   */
  private static void assertStuckOnlyOnTheBudget(
      List<String> names,
      Map<String, Service> services,
      Map<String, Target> targets,
      List<RolloutStep> last) {
    Map<String, Rail> holds =
        last.stream().map(Hold.class::cast).collect(Collectors.toMap(Hold::workload, Hold::rail));
    List<String> behind = new ArrayList<>();
    for (String name : names) {
      Target t = targets.get(name);
      Service s = services.get(name);
      if (t == null || s.rolledBack) {
        continue;
      }
      if (s.heapMib * MIB != t.heapBytes() || s.limitMib * MIB != t.limitBytes()) {
        behind.add(name);
      }
    }
    for (String name : behind) {
      assertThat(holds.get(name)).as(name).isIn(Set.of(Rail.Budget, Rail.ShrinkFirst));
    }
    if (holds.containsValue(Rail.ShrinkFirst)) {
      assertThat(holds).containsValue(Rail.Budget);
    }
  }
}
