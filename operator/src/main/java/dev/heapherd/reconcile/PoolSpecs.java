package dev.heapherd.reconcile;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.heapherd.api.HeapPool;
import dev.heapherd.input.InputException;
import dev.heapherd.input.PoolFile;
import dev.heapherd.input.PoolFileReader;
import io.fabric8.kubernetes.client.utils.KubernetesSerialization;

/**
 * Reads a HeapPool from the API server through the same validator as a pool file, so the operator,
 * {@code plan} and {@code render} accept and reject exactly the same pools.
 */
final class PoolSpecs {

  private static final KubernetesSerialization SERIALIZATION = new KubernetesSerialization();

  private PoolSpecs() {}

  static PoolFile read(HeapPool pool) throws InputException {
    JsonNode tree = SERIALIZATION.convertValue(pool, JsonNode.class);
    // Status is ours, not the admin's: validate what they wrote.
    ((ObjectNode) tree).remove("status");
    String source =
        "HeapPool " + pool.getMetadata().getNamespace() + "/" + pool.getMetadata().getName();
    return PoolFileReader.fromTree(source, tree);
  }
}
