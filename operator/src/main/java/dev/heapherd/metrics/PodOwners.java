package dev.heapherd.metrics;

import java.util.Optional;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Tells which Deployment or StatefulSet a pod belongs to from its name, as the Kubernetes
 * controllers name pods: a Deployment's pods are {@code <name>-<pod-template-hash>-<5 chars>}, a
 * StatefulSet's {@code <name>-<ordinal>}.
 */
public final class PodOwners {

  /**
   * ReplicaSet suffix: the pod-template hash (up to 10 characters from the safe alphabet the
   * controllers use, which has no vowels) and the 5-character random pod suffix.
   */
  private static final Pattern DEPLOYMENT_POD =
      Pattern.compile("(.+)-[bcdfghjklmnpqrstvwxz2456789]{1,10}-[bcdfghjklmnpqrstvwxz2456789]{5}");

  /** StatefulSet pods end in their ordinal. */
  private static final Pattern STATEFUL_POD = Pattern.compile("(.+)-(0|[1-9][0-9]*)");

  /** A pod's owner. */
  public record Owner(String kind, String name) {}

  private PodOwners() {}

  /** The owner of {@code pod}, if its name follows one of the two patterns. */
  public static Optional<Owner> of(String pod) {
    Matcher deployment = DEPLOYMENT_POD.matcher(pod);
    if (deployment.matches()) {
      return Optional.of(new Owner("Deployment", deployment.group(1)));
    }
    Matcher stateful = STATEFUL_POD.matcher(pod);
    if (stateful.matches()) {
      return Optional.of(new Owner("StatefulSet", stateful.group(1)));
    }
    return Optional.empty();
  }
}
