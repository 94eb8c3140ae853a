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
import java.util.List;

/** Where and how the pool's workloads are measured. */
@JsonInclude(JsonInclude.Include.NON_NULL)
public class MetricsSpec {

  @JsonPropertyDescription("How the JVMs export metrics: micrometer, client-java or otel.")
  @SchemaFrom(type = PoolFile.Profile.class)
  public String profile;

  @JsonPropertyDescription("Window in seconds that rates and sizes are computed over.")
  @Min(PoolFileReader.MIN_WINDOW_SECONDS)
  @Max(PoolFileReader.MAX_WINDOW_SECONDS)
  public Long windowSeconds;

  @JsonPropertyDescription("PromQL templates replacing single queries of the profile.")
  public List<Query> queries;

  @JsonPropertyDescription("Label whose value names a pod's workload; unset: from the pod name.")
  @Pattern(Patterns.PROMETHEUS_LABEL)
  public String workloadLabel;

  /** One replaced query template. */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public static class Query {
    @JsonPropertyDescription("The signal the template measures, e.g. liveBytes.")
    @Required
    public String signal;

    @JsonPropertyDescription("The PromQL template.")
    @Required
    public String promql;
  }
}
