package dev.heapherd.api;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonPropertyDescription;
import dev.heapherd.input.Patterns;
import dev.heapherd.input.PoolFile;
import io.fabric8.crd.generator.annotation.SchemaFrom;
import io.fabric8.generator.annotation.Default;
import io.fabric8.generator.annotation.Pattern;
import io.fabric8.generator.annotation.Required;
import io.fabric8.generator.annotation.Size;
import io.fabric8.generator.annotation.ValidationRule;
import java.util.List;

/** What an admin declares for a pool: the budget, which workloads, and how to change them. */
@JsonInclude(JsonInclude.Include.NON_NULL)
@ValidationRule(
    value = "has(self.memoryBudget) != has(self.prices)",
    message = "set exactly one of memoryBudget or prices")
public class HeapPoolSpec {

  // A string with the enum's schema: a value the schema would reject then reaches the reconciler
  // as text and is reported in a condition, instead of failing to deserialise in the informer.
  @JsonPropertyDescription("DryRun publishes proposals and changes nothing; Apply rolls them out.")
  @Default("DryRun")
  @SchemaFrom(type = PoolFile.Mode.class)
  public String mode;

  @JsonPropertyDescription(
      "Container memory the selected workloads may use in all, e.g. 72Gi. Exclusive with prices.")
  @Pattern(Patterns.BYTES)
  public String memoryBudget;

  @JsonPropertyDescription("Trade memory against GC CPU at these prices instead of a budget.")
  public Prices prices;

  @JsonPropertyDescription("Deployments and StatefulSets of this namespace that share the budget.")
  @Required
  public WorkloadSelector selector;

  @JsonPropertyDescription("Settings for every workload of the pool.")
  public WorkloadSettingsSpec defaults;

  @JsonPropertyDescription("Settings for named workloads, over the defaults.")
  @Size(max = Patterns.MAX_OVERRIDES)
  public List<WorkloadOverride> overrides;

  @JsonPropertyDescription("How the workloads are measured in Prometheus.")
  public MetricsSpec metrics;

  @JsonPropertyDescription("How proposals are applied in Apply mode, and the safety rails.")
  public RolloutSpec rollout;

  @JsonPropertyDescription(
      "The hash of the proposal an admin approved (status.proposal.hash). Apply mode with manual"
          + " approval changes workloads only while this equals the current proposal's hash.")
  @Pattern(Patterns.HASH)
  public String approvedProposal;

  /** Prices for the price objective. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class Prices {
    @JsonPropertyDescription("Price of one GiB of container memory for one hour, e.g. \"0.0045\".")
    @Required
    @Pattern(Patterns.PRICE)
    public String memoryPerGiBHour;

    @JsonPropertyDescription("Price of one core for one hour, e.g. \"0.04\".")
    @Required
    @Pattern(Patterns.PRICE)
    public String cpuPerCoreHour;
  }

  /** Picks workloads by their labels. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class WorkloadSelector {
    @JsonPropertyDescription("Labels a Deployment or StatefulSet must carry, all of them.")
    @Required
    @Size(min = 1)
    public java.util.Map<String, String> matchLabels;
  }
}
