package dev.heapherd.api;

import io.fabric8.crd.generator.annotation.AdditionalPrinterColumn;
import io.fabric8.kubernetes.api.model.Namespaced;
import io.fabric8.kubernetes.client.CustomResource;
import io.fabric8.kubernetes.model.annotation.Group;
import io.fabric8.kubernetes.model.annotation.ShortNames;
import io.fabric8.kubernetes.model.annotation.Version;

/** A memory budget shared by the JVM workloads of one namespace that a label selector picks. */
@Group(HeapPool.GROUP)
@Version(HeapPool.VERSION)
@ShortNames("hpool")
@AdditionalPrinterColumn(name = "Mode", jsonPath = ".spec.mode")
@AdditionalPrinterColumn(name = "Budget", jsonPath = ".spec.memoryBudget")
@AdditionalPrinterColumn(name = "Used", jsonPath = ".status.proposal.memoryUsed")
@AdditionalPrinterColumn(name = "GC Change", jsonPath = ".status.proposal.gcChange")
@AdditionalPrinterColumn(
    name = "State",
    jsonPath = ".status.conditions[?(@.type==\"Ready\")].reason")
@AdditionalPrinterColumn(
    name = "Age",
    jsonPath = ".metadata.creationTimestamp",
    type = AdditionalPrinterColumn.Type.DATE)
public class HeapPool extends CustomResource<HeapPoolSpec, HeapPoolStatus> implements Namespaced {

  /** The API group of heapherd's resources. */
  public static final String GROUP = "heapherd.dev";

  /** The version of the HeapPool API. */
  public static final String VERSION = "v1alpha1";
}
