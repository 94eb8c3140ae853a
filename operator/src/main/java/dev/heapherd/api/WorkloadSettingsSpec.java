package dev.heapherd.api;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonPropertyDescription;
import dev.heapherd.input.Patterns;
import dev.heapherd.input.PoolFileReader;
import io.fabric8.generator.annotation.Max;
import io.fabric8.generator.annotation.Min;
import io.fabric8.generator.annotation.Pattern;
import io.fabric8.generator.annotation.Size;
import io.fabric8.generator.annotation.ValidationRule;

/** Per-workload settings: a pool's defaults, or one workload's overrides. */
@JsonInclude(JsonInclude.Include.NON_NULL)
@ValidationRule(
    value =
        "!has(self.heapFloor) || !has(self.heapCeiling)"
            + " || quantity(self.heapFloor).compareTo(quantity(self.heapCeiling)) <= 0",
    message = "heapFloor must not be above heapCeiling")
public class WorkloadSettingsSpec {

  @JsonPropertyDescription("Importance of the workload's GC time; 1 unless set.")
  @Min(1)
  @Max(PoolFileReader.MAX_WEIGHT)
  public Long weight;

  @JsonPropertyDescription("Smallest heap, e.g. 256Mi.")
  @Pattern(Patterns.BYTES)
  @Size(max = Patterns.QUANTITY_LENGTH)
  public String heapFloor;

  @JsonPropertyDescription("Largest heap, e.g. 12Gi.")
  @Pattern(Patterns.BYTES)
  @Size(max = Patterns.QUANTITY_LENGTH)
  public String heapCeiling;

  @JsonPropertyDescription("Keep the heap at least this percent above the live bytes.")
  @Min(0)
  @Max(PoolFileReader.MAX_PERCENT)
  public Long minHeadroomPercent;

  @JsonPropertyDescription("Change the heap by at most this percent in one step.")
  @Min(1)
  @Max(PoolFileReader.MAX_PERCENT)
  public Long maxStepPercent;

  @JsonPropertyDescription("Extra container memory above heap and measured non-heap.")
  @Pattern(Patterns.BYTES)
  @Size(max = Patterns.QUANTITY_LENGTH)
  public String limitMargin;
}
