package dev.heapherd.api;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonPropertyDescription;
import dev.heapherd.input.Patterns;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import io.fabric8.crd.generator.annotation.SchemaFrom;
import io.fabric8.generator.annotation.Max;
import io.fabric8.generator.annotation.Min;
import io.fabric8.generator.annotation.Pattern;
import io.fabric8.generator.annotation.Required;
import io.fabric8.generator.annotation.Size;
import io.fabric8.generator.annotation.ValidationRule;
import java.util.List;

/** How Apply mode changes workloads, and the rails that keep it safe. */
@JsonInclude(JsonInclude.Include.NON_NULL)
public class RolloutSpec {

  @JsonPropertyDescription("Container whose limit and JVM options change; unset: the first one.")
  @Pattern(Patterns.DNS_LABEL)
  public String containerName;

  @JsonPropertyDescription("Environment variable that carries the JVM options.")
  @Pattern(Patterns.ENV_NAME)
  public String jvmOptionsVariable;

  @JsonPropertyDescription("Also set the memory request to the new limit.")
  public Boolean setMemoryRequest;

  @JsonPropertyDescription("Also write -Xms equal to -Xmx.")
  public Boolean setInitialHeap;

  @JsonPropertyDescription("Manual: apply only the approved proposal hash. Automatic: apply any.")
  @SchemaFrom(type = PoolFile.Approval.class)
  public String approval;

  @JsonPropertyDescription("Workloads of the pool that may roll at the same time.")
  @Min(1)
  @Max(PoolFileReader.MAX_ROLLING)
  public Long maxRollingWorkloads;

  @JsonPropertyDescription("Seconds a workload is left alone after its last change.")
  @Min(0)
  @Max(PoolFileReader.MAX_SECONDS)
  public Long cooldownSeconds;

  @JsonPropertyDescription(
      "Skip a change when both the heap and the container limit move by less than this"
          + " percent of their current values.")
  @Min(0)
  @Max(100)
  public Long changeThresholdPercent;

  @JsonPropertyDescription("Hold when the newest metrics are older than this many seconds.")
  @Min(PoolFileReader.MIN_METRICS_AGE_SECONDS)
  @Max(PoolFileReader.MAX_SECONDS)
  public Long metricsMaxAgeSeconds;

  @JsonPropertyDescription("Times in which no new change starts; rollbacks still happen.")
  @Size(max = Patterns.MAX_FREEZE_WINDOWS)
  public List<FreezeWindow> freezeWindows;

  /** A period in which no rollout starts. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  @ValidationRule(
      value = "timestamp(self.end) > timestamp(self.start)",
      message = "end must be after start")
  public static class FreezeWindow {
    @JsonPropertyDescription("Start, RFC 3339, e.g. 2026-12-24T00:00:00Z.")
    @Required
    @Pattern(Patterns.TIMESTAMP)
    @Size(max = Patterns.TIMESTAMP_LENGTH)
    public String start;

    @JsonPropertyDescription("End, RFC 3339.")
    @Required
    @Pattern(Patterns.TIMESTAMP)
    @Size(max = Patterns.TIMESTAMP_LENGTH)
    public String end;
  }
}
