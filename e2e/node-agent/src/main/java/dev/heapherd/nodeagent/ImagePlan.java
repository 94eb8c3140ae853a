package dev.heapherd.nodeagent;

import io.fabric8.kubernetes.api.model.Container;
import io.fabric8.kubernetes.api.model.Pod;
import io.fabric8.kubernetes.api.model.PodSecurityContext;
import io.fabric8.kubernetes.api.model.SecurityContext;
import io.fabric8.kubernetes.api.model.Volume;
import io.fabric8.kubernetes.api.model.VolumeMount;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalLong;

/**
 * How a container of an unpacked image runs, by the Kubernetes rules: {@code command} replaces the
 * image's entrypoint and {@code args} its cmd; the container's securityContext user wins over the
 * pod's, which wins over the image's; emptyDir volumes become folders of the container's root, the
 * service-account token goes where the pod mounts it, and other volumes are refused.
 */
final class ImagePlan {

  private ImagePlan() {}

  static ContainerLaunch plan(
      Pod pod,
      Container container,
      ImageMapping mapping,
      ImageArchive.Unpacked image,
      Map<String, String> environment,
      OptionalLong memoryLimitBytes) {
    List<String> command = ContainerLaunch.listOrEmpty(container.getCommand());
    List<String> args = ContainerLaunch.listOrEmpty(container.getArgs());
    List<String> argv = new ArrayList<>(command.isEmpty() ? image.config().entrypoint() : command);
    // Kubernetes: args replace the image's cmd; a command without args drops the cmd too.
    argv.addAll(!args.isEmpty() || !command.isEmpty() ? args : image.config().cmd());
    if (argv.isEmpty()) {
      return new ContainerLaunch.NotRunnable(
          ContainerLaunch.CONFIG_ERROR,
          "image " + container.getImage() + " has no entrypoint and the container no command");
    }
    ImageArchive.UserIds user;
    try {
      user = user(pod, container, image);
    } catch (IllegalArgumentException | IOException e) {
      return new ContainerLaunch.NotRunnable(ContainerLaunch.CONFIG_ERROR, e.getMessage());
    }
    if (runAsNonRoot(pod, container) && user.uid() == ContainerLaunch.ROOT) {
      // The kubelet's check, in its words.
      return new ContainerLaunch.NotRunnable(
          ContainerLaunch.CONFIG_ERROR, "container has runAsNonRoot and image will run as root");
    }
    List<String> emptyDirs = new ArrayList<>();
    Optional<String> serviceAccountDir = Optional.empty();
    for (VolumeMount mount : ContainerLaunch.listOrEmpty(container.getVolumeMounts())) {
      Optional<Volume> volume =
          ContainerLaunch.listOrEmpty(pod.getSpec().getVolumes()).stream()
              .filter(v -> v.getName().equals(mount.getName()))
              .findFirst();
      if (!absoluteWithoutParents(mount.getMountPath())) {
        return new ContainerLaunch.NotRunnable(
            ContainerLaunch.CONFIG_ERROR,
            "volume mount "
                + mount.getName()
                + ": mountPath must be an absolute path without .. in it");
      }
      if (volume.isPresent() && volume.get().getEmptyDir() != null) {
        emptyDirs.add(mount.getMountPath());
      } else if (volume.isPresent() && servesToken(volume.get())) {
        serviceAccountDir = Optional.of(mount.getMountPath());
      } else {
        return new ContainerLaunch.NotRunnable(
            ContainerLaunch.CONFIG_ERROR,
            "volume "
                + mount.getName()
                + ": only emptyDir volumes and the service-account token can be mounted here");
      }
    }
    String workingDir =
        container.getWorkingDir() != null && !container.getWorkingDir().isEmpty()
            ? container.getWorkingDir()
            : image.config().workingDir().isEmpty() ? "/" : image.config().workingDir();
    return new ContainerLaunch.Image(
        mapping,
        image,
        argv,
        environment,
        memoryLimitBytes,
        user,
        workingDir,
        emptyDirs,
        serviceAccountDir,
        Optional.empty());
  }

  /** Whether {@code path} is absolute and never climbs with {@code ..}, so it stays in a root. */
  static boolean absoluteWithoutParents(String path) {
    if (!path.startsWith("/")) {
      return false;
    }
    for (Path element : Path.of(path)) {
      if (element.toString().equals("..")) {
        return false;
      }
    }
    return true;
  }

  /** The projected volume the API server's ServiceAccount admission adds for the pod's token. */
  private static boolean servesToken(Volume volume) {
    return volume.getProjected() != null
        && ContainerLaunch.listOrEmpty(volume.getProjected().getSources()).stream()
            .anyMatch(s -> s.getServiceAccountToken() != null);
  }

  private static ImageArchive.UserIds user(
      Pod pod, Container container, ImageArchive.Unpacked image) throws IOException {
    Optional<ImageArchive.UserIds> fromImage = ImageArchive.user(image);
    SecurityContext own = container.getSecurityContext();
    PodSecurityContext shared = pod.getSpec().getSecurityContext();
    Long uid = own != null && own.getRunAsUser() != null ? own.getRunAsUser() : null;
    if (uid == null && shared != null) {
      uid = shared.getRunAsUser();
    }
    Long gid = own != null && own.getRunAsGroup() != null ? own.getRunAsGroup() : null;
    if (gid == null && shared != null) {
      gid = shared.getRunAsGroup();
    }
    long finalUid =
        uid != null ? uid : fromImage.map(ImageArchive.UserIds::uid).orElse(ContainerLaunch.ROOT);
    long finalGid =
        gid != null ? gid : fromImage.map(ImageArchive.UserIds::gid).orElse(ContainerLaunch.ROOT);
    return new ImageArchive.UserIds(finalUid, finalGid);
  }

  private static boolean runAsNonRoot(Pod pod, Container container) {
    SecurityContext own = container.getSecurityContext();
    if (own != null && own.getRunAsNonRoot() != null) {
      return own.getRunAsNonRoot();
    }
    PodSecurityContext shared = pod.getSpec().getSecurityContext();
    return shared != null && Boolean.TRUE.equals(shared.getRunAsNonRoot());
  }
}
