package dev.heapherd.rollout;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.Optional;

/**
 * What a workload looked like before heapherd changed it, and what it was changed to. Kept in an
 * annotation on the workload so an operator restart mid-rollout can finish or roll back.
 *
 * @param proposalHash the proposal the change came from
 * @param previousLimit the container's memory limit before, as written, null when unset
 * @param previousRequest the container's memory request before, null when unset
 * @param previousJvmOptions the JVM options variable's value before, null when unset
 * @param targetHeapBytes the heap written
 * @param targetLimitBytes the limit written
 * @param startedAt when the change was written, RFC 3339
 * @param rollingBack the previous values were written back and their rollout has not finished
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record RolloutRecord(
    String proposalHash,
    String previousLimit,
    String previousRequest,
    String previousJvmOptions,
    long targetHeapBytes,
    long targetLimitBytes,
    String startedAt,
    boolean rollingBack) {

  /** This record after the previous values were written back. */
  public RolloutRecord rolledBack() {
    return new RolloutRecord(
        proposalHash,
        previousLimit,
        previousRequest,
        previousJvmOptions,
        targetHeapBytes,
        targetLimitBytes,
        startedAt,
        true);
  }

  private static final ObjectMapper JSON =
      new ObjectMapper().disable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES);

  /** The annotation's value. */
  public String toJson() {
    try {
      return JSON.writeValueAsString(this);
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("a record of strings and numbers always serialises", e);
    }
  }

  /** Reads an annotation's value; empty when it is absent or not ours to understand. */
  public static Optional<RolloutRecord> fromJson(String json) {
    if (json == null || json.isBlank()) {
      return Optional.empty();
    }
    try {
      return Optional.of(JSON.readValue(json, RolloutRecord.class));
    } catch (JsonProcessingException e) {
      return Optional.empty();
    }
  }
}
