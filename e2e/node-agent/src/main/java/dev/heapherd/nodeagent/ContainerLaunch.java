package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.EnvVar;
import io.fabric8.kubernetes.api.model.ObjectFieldSelector;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.Quantity;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalLong;

/** What process a container runs as, or why it cannot run here. */
sealed interface ContainerLaunch {

  /** Waiting reason for an image no jar is mapped to; our own wording. */
  String IMAGE_NOT_RUNNABLE = "ImageNotRunnable";

  /** Kubernetes' waiting reason for a container whose settings cannot be turned into a process. */
  String CONFIG_ERROR = "CreateContainerConfigError";

  /** The loopback address every pod shares on this node. */
  String LOOPBACK = "127.0.0.1";

  /** {@code java -jar} with the container's environment and args. */
  record Jar(
      ImageMapping image,
      String imageId,
      List<String> args,
      Map<String, String> environment,
      OptionalLong memoryLimitBytes)
      implements ContainerLaunch {

    /** This launch with one more environment variable. */
    Jar withVariable(String name, String value) {
      Map<String, String> more = new LinkedHashMap<>(environment);
      more.put(name, value);
      return new Jar(image, imageId, args, more, memoryLimitBytes);
    }

    /** The command line, with the port argument last so it wins over one in the args. */
    List<String> command(Path java, Optional<Integer> port) {
      List<String> command =
          new ArrayList<>(List.of(java.toString(), "-jar", image.jar().toString()));
      command.addAll(args);
      port.flatMap(image::portArgument).ifPresent(command::add);
      return command;
    }

    /** Whether the process is told a port and so gets one. */
    boolean needsPort() {
      return image.portArgument().isPresent();
    }
  }

  /** A container left waiting, with the reason and message its status shows. */
  record NotRunnable(String reason, String message) implements ContainerLaunch {}

  /** Plans {@code container} of {@code pod} against the image table. */
  static ContainerLaunch plan(Pod pod, Container container, ImageTable images, String nodeName) {
    if (pod.getSpec().getInitContainers() != null && !pod.getSpec().getInitContainers().isEmpty()) {
      return new NotRunnable(CONFIG_ERROR, "init containers are not run by this node agent");
    }
    Optional<ImageMapping> image = images.lookup(container.getImage());
    if (image.isEmpty()) {
      return new NotRunnable(
          IMAGE_NOT_RUNNABLE,
          "no jar is mapped to image "
              + container.getImage()
              + " on this node (mapped repository suffixes: "
              + images.suffixes()
              + ")");
    }
    if (container.getCommand() != null && !container.getCommand().isEmpty()) {
      return new NotRunnable(
          CONFIG_ERROR, "command is not supported here: images run java -jar with the args only");
    }
    if (container.getEnvFrom() != null && !container.getEnvFrom().isEmpty()) {
      return new NotRunnable(CONFIG_ERROR, "envFrom is not supported by this node agent");
    }
    Map<String, String> environment = new LinkedHashMap<>();
    // Images set PATH; the agent's own stands in. HOSTNAME is the pod's name, as in a container.
    String path = System.getenv("PATH");
    if (path != null) {
      environment.put("PATH", path);
    }
    environment.put("HOSTNAME", pod.getMetadata().getName());
    for (EnvVar variable : listOrEmpty(container.getEnv())) {
      if (variable.getValueFrom() == null) {
        environment.put(variable.getName(), variable.getValue() == null ? "" : variable.getValue());
        continue;
      }
      ObjectFieldSelector field = variable.getValueFrom().getFieldRef();
      Optional<String> value =
          field == null ? Optional.empty() : fieldValue(pod, field.getFieldPath(), nodeName);
      if (value.isEmpty()) {
        return new NotRunnable(
            CONFIG_ERROR,
            "env "
                + variable.getName()
                + ": only values and fieldRef to metadata.name, metadata.namespace, metadata.uid,"
                + " spec.nodeName, spec.serviceAccountName, status.podIP and status.hostIP are"
                + " supported here");
      }
      environment.put(variable.getName(), value.get());
    }
    return new Jar(
        image.get(),
        images.imageId(image.get()),
        listOrEmpty(container.getArgs()),
        environment,
        memoryLimit(container));
  }

  private static Optional<String> fieldValue(Pod pod, String fieldPath, String nodeName) {
    return switch (fieldPath) {
      case "metadata.name" -> Optional.of(pod.getMetadata().getName());
      case "metadata.namespace" -> Optional.of(pod.getMetadata().getNamespace());
      case "metadata.uid" -> Optional.of(pod.getMetadata().getUid());
      case "spec.nodeName" -> Optional.of(nodeName);
      case "spec.serviceAccountName" ->
          Optional.ofNullable(pod.getSpec().getServiceAccountName()).or(() -> Optional.of(""));
      case "status.podIP", "status.hostIP" -> Optional.of(LOOPBACK);
      default -> Optional.empty();
    };
  }

  private static OptionalLong memoryLimit(Container container) {
    if (container.getResources() == null || container.getResources().getLimits() == null) {
      return OptionalLong.empty();
    }
    Quantity limit = container.getResources().getLimits().get("memory");
    return limit == null
        ? OptionalLong.empty()
        : OptionalLong.of(Quantity.getAmountInBytes(limit).longValue());
  }

  private static <T> List<T> listOrEmpty(List<T> list) {
    return list == null ? List.of() : list;
  }
}
