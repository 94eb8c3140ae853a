package dev.heapherd.rollout;

import dev.heapherd.engine.Units;
import dev.heapherd.input.ErrorText;
import dev.heapherd.input.Quantity;
import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.EnvVar;
import io.fabric8.kubernetes.api.model.PodTemplateSpec;
import io.fabric8.kubernetes.api.model.PodTemplateSpecBuilder;
import io.fabric8.kubernetes.api.model.ResourceRequirementsBuilder;
import java.util.List;
import java.util.Optional;
import java.util.OptionalLong;

/** Reads and rewrites the memory settings of one container in a pod template. */
public final class PodTemplates {

  private static final String MEMORY = "memory";

  private PodTemplates() {}

  /**
   * The memory settings of the chosen container.
   *
   * @param containerName the container
   * @param limit its memory limit as written, null when unset
   * @param request its memory request as written, null when unset
   * @param jvmOptions the JVM options variable's value, null when unset
   * @param jvmOptionsFromReference the variable takes its value from a ConfigMap, Secret or field
   * @param otherContainersLimitBytes the memory limits of the pod's other containers, summed
   * @param otherContainersProblem why one of the other containers' limits cannot be read
   */
  public record MemorySettings(
      String containerName,
      String limit,
      String request,
      String jvmOptions,
      boolean jvmOptionsFromReference,
      long otherContainersLimitBytes,
      Optional<String> otherContainersProblem) {

    /** The limit in bytes, if set. */
    public OptionalLong limitBytes() {
      return limit == null
          ? OptionalLong.empty()
          : OptionalLong.of(Quantity.parseMemoryBytes(limit));
    }

    /**
     * Why heapherd cannot resize this container safely, or empty: a memory size (its own or another
     * container's) that is not whole bytes, or JVM options the JVM would refuse.
     */
    public Optional<String> problem() {
      if (otherContainersProblem.isPresent()) {
        return otherContainersProblem;
      }
      for (String size : new String[] {limit, request}) {
        if (size != null) {
          try {
            Quantity.parseMemoryBytes(size);
          } catch (IllegalArgumentException e) {
            return Optional.of("memory size " + e.getMessage());
          }
        }
      }
      return jvmOptions == null ? Optional.empty() : JvmOptions.problem(jvmOptions);
    }

    /** The -Xmx the options carry, if any. */
    public OptionalLong heapBytes() {
      return jvmOptions == null ? OptionalLong.empty() : JvmOptions.maxHeapBytes(jvmOptions);
    }
  }

  /**
   * The chosen container's settings; empty when the template has no such container.
   *
   * @param containerName the container, or empty for the first one
   */
  public static Optional<MemorySettings> read(
      PodTemplateSpec template, String containerName, String variable) {
    List<Container> containers = template.getSpec().getContainers();
    Optional<Container> chosen = find(containers, containerName);
    if (chosen.isEmpty()) {
      return Optional.empty();
    }
    Container c = chosen.get();
    long others = 0;
    String othersProblem = null;
    for (Container o : containers) {
      Optional<String> limit = o == c ? Optional.empty() : quantity(o, true);
      if (limit.isPresent()) {
        // Read with the same rule as the chosen container: a sidecar's "512m" is half a byte
        // to Kubernetes, and counting it as such would hand its memory to the heap.
        try {
          others += Quantity.parseMemoryBytes(limit.get());
        } catch (IllegalArgumentException e) {
          othersProblem =
              "container " + ErrorText.quoted(o.getName()) + ": memory size " + e.getMessage();
        }
      }
    }
    Optional<EnvVar> env =
        c.getEnv() == null
            ? Optional.empty()
            : c.getEnv().stream().filter(e -> variable.equals(e.getName())).findFirst();
    return Optional.of(
        new MemorySettings(
            c.getName(),
            quantity(c, true).orElse(null),
            quantity(c, false).orElse(null),
            env.map(EnvVar::getValue).orElse(null),
            env.map(e -> e.getValueFrom() != null).orElse(false),
            others,
            Optional.ofNullable(othersProblem)));
  }

  /**
   * The template with the chosen container's limit (and request) set and its JVM options rewritten
   * to the new heap; every other field is kept.
   */
  public static PodTemplateSpec resized(
      PodTemplateSpec template,
      String containerName,
      String variable,
      long heapBytes,
      long limitBytes,
      boolean setRequest,
      boolean setInitialHeap) {
    MemorySettings now =
        read(template, containerName, variable)
            .orElseThrow(() -> new IllegalArgumentException("no container " + containerName));
    String options =
        JvmOptions.withHeap(
            now.jvmOptions(),
            heapBytes,
            setInitialHeap ? OptionalLong.of(heapBytes) : OptionalLong.empty());
    String limit = mebibytes(limitBytes);
    return with(
        template,
        now.containerName(),
        variable,
        limit,
        setRequest ? limit : now.request(),
        options);
  }

  /** The template with the chosen container's memory settings as {@code record} saved them. */
  public static PodTemplateSpec restored(
      PodTemplateSpec template, String containerName, String variable, RolloutRecord record) {
    String name =
        read(template, containerName, variable)
            .map(MemorySettings::containerName)
            .orElseThrow(() -> new IllegalArgumentException("no container " + containerName));
    return with(
        template,
        name,
        variable,
        record.previousLimit(),
        record.previousRequest(),
        record.previousJvmOptions());
  }

  /** Bytes as an exact quantity in whole MiB, rounded up: {@code 1536Mi}, never lossy. */
  public static String mebibytes(long bytes) {
    return Units.roundUpToMib(bytes) / Units.MIB + "Mi";
  }

  private static PodTemplateSpec with(
      PodTemplateSpec template,
      String containerName,
      String variable,
      String limit,
      String request,
      String jvmOptions) {
    PodTemplateSpecBuilder out = new PodTemplateSpecBuilder(template);
    out.editSpec()
        .editMatchingContainer(c -> containerName.equals(c.getName()))
        .withResources(resources(template, containerName, limit, request))
        .withEnv(env(template, containerName, variable, jvmOptions))
        .endContainer()
        .endSpec();
    return out.build();
  }

  private static io.fabric8.kubernetes.api.model.ResourceRequirements resources(
      PodTemplateSpec template, String containerName, String limit, String request) {
    Container c = find(template.getSpec().getContainers(), containerName).orElseThrow();
    ResourceRequirementsBuilder r =
        c.getResources() == null
            ? new ResourceRequirementsBuilder()
            : new ResourceRequirementsBuilder(c.getResources());
    if (limit == null) {
      r.removeFromLimits(MEMORY);
    } else {
      r.addToLimits(MEMORY, new io.fabric8.kubernetes.api.model.Quantity(limit));
    }
    if (request == null) {
      r.removeFromRequests(MEMORY);
    } else {
      r.addToRequests(MEMORY, new io.fabric8.kubernetes.api.model.Quantity(request));
    }
    return r.build();
  }

  private static List<EnvVar> env(
      PodTemplateSpec template, String containerName, String variable, String value) {
    Container c = find(template.getSpec().getContainers(), containerName).orElseThrow();
    List<EnvVar> env = c.getEnv() == null ? List.of() : c.getEnv();
    List<EnvVar> out = new java.util.ArrayList<>();
    boolean replaced = false;
    for (EnvVar e : env) {
      if (variable.equals(e.getName())) {
        replaced = true;
        if (value != null) {
          out.add(new EnvVar(variable, value, null));
        }
      } else {
        out.add(e);
      }
    }
    if (!replaced && value != null) {
      out.add(new EnvVar(variable, value, null));
    }
    return out;
  }

  private static Optional<Container> find(List<Container> containers, String name) {
    if (containers == null || containers.isEmpty()) {
      return Optional.empty();
    }
    if (name.isEmpty()) {
      return Optional.of(containers.get(0));
    }
    return containers.stream().filter(c -> name.equals(c.getName())).findFirst();
  }

  private static Optional<String> quantity(Container c, boolean limit) {
    if (c.getResources() == null) {
      return Optional.empty();
    }
    var map = limit ? c.getResources().getLimits() : c.getResources().getRequests();
    if (map == null || !map.containsKey(MEMORY)) {
      return Optional.empty();
    }
    return Optional.of(map.get(MEMORY).toString());
  }
}
