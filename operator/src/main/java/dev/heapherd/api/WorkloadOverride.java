package dev.heapherd.api;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonPropertyDescription;
import io.fabric8.generator.annotation.Pattern;
import io.fabric8.generator.annotation.Required;

/** Settings for one named workload of the pool. */
@JsonInclude(JsonInclude.Include.NON_NULL)
public class WorkloadOverride extends WorkloadSettingsSpec {

  @JsonPropertyDescription("Name of the Deployment or StatefulSet.")
  @Required
  @Pattern("^[a-z0-9]([-a-z0-9.]*[a-z0-9])?$")
  public String name;
}
