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

  /** Waiting reason for an image nothing is mapped to; our own wording. */
  String IMAGE_NOT_RUNNABLE = "ImageNotRunnable";

  /** Kubernetes' waiting reason for a container whose settings cannot be turned into a process. */
  String CONFIG_ERROR = "CreateContainerConfigError";

  /** The loopback address every pod shares on this node. */
  String LOOPBACK = "127.0.0.1";

  /** The user ID of root. */
  long ROOT = 0;

  /** util-linux's unshare, where Debian installs it. */
  String UNSHARE = "/usr/bin/unshare";

  /** A container that can be started: from a jar or from an unpacked image. */
  sealed interface Startable extends ContainerLaunch {

    ImageMapping image();

    String imageId();

    Map<String, String> environment();

    OptionalLong memoryLimitBytes();

    /** Whether the process is told a port and so gets one. */
    default boolean needsPort() {
      return image().portArgument().isPresent();
    }
  }

  /** {@code java -jar} with the container's environment and args. */
  record Jar(
      ImageMapping image,
      String imageId,
      List<String> args,
      Map<String, String> environment,
      OptionalLong memoryLimitBytes)
      implements Startable {

    /** This launch with one more environment variable. */
    Jar withVariable(String name, String value) {
      Map<String, String> more = new LinkedHashMap<>(environment);
      more.put(name, value);
      return new Jar(image, imageId, args, more, memoryLimitBytes);
    }

    /** The command line, with the port argument last so it wins over one in the args. */
    List<String> command(Path java, Optional<Integer> port) {
      List<String> command =
          new ArrayList<>(List.of(java.toString(), "-jar", image.file().toString()));
      command.addAll(args);
      port.flatMap(image::portArgument).ifPresent(command::add);
      return command;
    }
  }

  /**
   * An image's entrypoint run in a root folder of its own (a copy of the unpacked image), as the
   * container's user, with the folders of its emptyDir volumes and, when the pod has one, its
   * service-account token where the pod mounts it.
   */
  record Image(
      ImageMapping image,
      ImageArchive.Unpacked unpacked,
      List<String> argv,
      Map<String, String> environment,
      OptionalLong memoryLimitBytes,
      ImageArchive.UserIds user,
      String workingDir,
      List<String> emptyDirs,
      Optional<String> serviceAccountDir,
      Optional<ServiceAccountCredentials.Token> token)
      implements Startable {

    @Override
    public String imageId() {
      return unpacked.imageId();
    }

    /** This launch with the pod's token, and the variables in-cluster clients find the API by. */
    Image withToken(ServiceAccountCredentials.Token given) {
      Map<String, String> more = new LinkedHashMap<>(environment);
      more.put("KUBERNETES_SERVICE_HOST", given.apiHost());
      more.put("KUBERNETES_SERVICE_PORT", Integer.toString(given.apiPort()));
      return new Image(
          image,
          unpacked,
          argv,
          more,
          memoryLimitBytes,
          user,
          workingDir,
          emptyDirs,
          serviceAccountDir,
          Optional.of(given));
    }

    /**
     * The command line: util-linux {@code unshare} gives the process a mount namespace with its own
     * /proc, changes its root to {@code rootfs} and its user, then runs the entrypoint with the
     * args and the port argument last. The process keeps unshare's pid.
     */
    List<String> command(Path rootfs, Optional<Integer> port) {
      List<String> command =
          new ArrayList<>(
              List.of(
                  UNSHARE,
                  "--mount",
                  "--mount-proc",
                  "--root=" + rootfs,
                  "--wd=" + workingDir,
                  "--setuid=" + user.uid(),
                  "--setgid=" + user.gid(),
                  "--"));
      command.addAll(argv);
      port.flatMap(image::portArgument).ifPresent(command::add);
      return command;
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
          "nothing is mapped to image "
              + container.getImage()
              + " on this node (mapped repository suffixes: "
              + images.suffixes()
              + ")");
    }
    Optional<ImageArchive.Unpacked> unpacked = images.unpacked(image.get());
    if (unpacked.isEmpty() && !listOrEmpty(container.getCommand()).isEmpty()) {
      return new NotRunnable(
          CONFIG_ERROR, "command is not supported here: jars run java -jar with the args only");
    }
    if (container.getEnvFrom() != null && !container.getEnvFrom().isEmpty()) {
      return new NotRunnable(CONFIG_ERROR, "envFrom is not supported by this node agent");
    }
    Map<String, String> environment = new LinkedHashMap<>();
    if (unpacked.isPresent()) {
      for (String variable : unpacked.get().config().env()) {
        int equals = variable.indexOf('=');
        if (equals > 0) {
          environment.put(variable.substring(0, equals), variable.substring(equals + 1));
        }
      }
    } else {
      // A jar has no image to set PATH; the agent's own stands in.
      String path = System.getenv("PATH");
      if (path != null) {
        environment.put("PATH", path);
      }
    }
    // HOSTNAME is the pod's name, as in a container.
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
    if (unpacked.isPresent()) {
      return ImagePlan.plan(
          pod, container, image.get(), unpacked.get(), environment, memoryLimit(container));
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

  static <T> List<T> listOrEmpty(List<T> list) {
    return list == null ? List.of() : list;
  }
}
