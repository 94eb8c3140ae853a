package dev.heapherd.reconcile;

import dev.heapherd.plan.PlanDocument;
import dev.heapherd.plan.PlanPage;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;

/**
 * The review page of each pool's latest computed plan, as the operator serves it read-only on its
 * HTTP port under {@code /pools/NAMESPACE/NAME}.
 */
final class ReviewPages {

  /** Where the pages are served. */
  static final String PREFIX = "/pools/";

  private final Map<String, PlanDocument> pages = new ConcurrentHashMap<>();

  /** The path of a pool's page on the operator's HTTP port. */
  static String path(String namespace, String name) {
    return PREFIX + namespace + "/" + name;
  }

  /** Keeps the page of {@code doc} for its pool, replacing the one before. */
  void put(String namespace, String name, PlanDocument doc) {
    // Rendered when asked for: every visit replaces the plan, few are ever viewed.
    pages.put(path(namespace, name), doc);
  }

  /** The page served at {@code path}, if a pool has one there. */
  Optional<String> at(String path) {
    return Optional.ofNullable(pages.get(path)).map(PlanPage::render);
  }

  /** Drops the pages of pools not in {@code existing} (their paths), as their meters are. */
  void retain(Set<String> existing) {
    pages.keySet().retainAll(existing);
  }
}
