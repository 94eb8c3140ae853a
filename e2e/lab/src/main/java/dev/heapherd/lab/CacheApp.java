package dev.heapherd.lab;

import com.github.benmanes.caffeine.cache.Cache;
import com.github.benmanes.caffeine.cache.Caffeine;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.binder.cache.CaffeineCacheMetrics;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.List;
import java.util.SplittableRandom;

/**
 * {@code cache}: a Caffeine cache of rendered price sheets in front of a made-up pricing backend.
 * Keys follow a Zipf distribution, as product popularity does; a miss computes the sheet (tiered
 * prices, a rendered fragment and its digest) and the bounded cache evicts a colder entry.
 */
public final class CacheApp implements LabApp {

  /** Entries the cache holds at size scale 1: about 135 MiB of sheets once full. */
  static final int BASE_ENTRIES = 92_000;

  /** Keys in the key space per cache entry: the cache holds a quarter of all products. */
  static final int KEY_SPACE_PER_ENTRY = 4;

  /**
   * Zipf exponent of key popularity; 0.9 is within the range reported for web and product catalogue
   * request traces and gives a hit ratio of roughly 80% here.
   */
  static final double POPULARITY_EXPONENT = 0.9;

  /** Smallest and largest rendered fragment at cost scale 1, in bytes. */
  static final int MIN_FRAGMENT_BYTES = 256;

  static final int MAX_FRAGMENT_BYTES = 1_536;

  /** Price tiers of a sheet (quantity breaks). */
  static final int PRICE_TIERS = 8;

  /** Highest list price of a product in cents. */
  static final int MAX_LIST_PRICE_CENTS = 100_000;

  /** Largest discount of one quantity break over the previous one, in percent (1 to this). */
  static final int MAX_TIER_DISCOUNT_PERCENT = 5;

  static final int PERCENT = 100;

  /**
   * Most warming operations per entry: a bound in case the key space could not fill the cache (the
   * key space has four times as many keys, so it fills in a few operations per entry).
   */
  static final int MAX_WARMING_OPERATIONS_PER_ENTRY = 50;

  /** Smallest cache that still shows eviction. */
  static final int MIN_ENTRIES = 100;

  /** A rendered price sheet: what the cache holds. */
  public record PriceSheet(
      long productId,
      String sku,
      String headline,
      int[] tierPrices,
      byte[] fragment,
      byte[] digest) {}

  private final AppSettings settings;
  private final SplittableRandom random;
  private final Catalogue catalogue;
  private final int entries;
  private final int[] keyOfRank;
  private final Zipf popularity;
  private final Cache<Long, PriceSheet> cache;
  private final MessageDigest sha256;

  /** A cache service of the given size, its statistics bound to {@code registry}. */
  public CacheApp(AppSettings settings, MeterRegistry registry) throws NoSuchAlgorithmException {
    this.settings = settings;
    random = new SplittableRandom(settings.seed());
    catalogue = new Catalogue(random);
    entries = settings.scaledSize(BASE_ENTRIES, MIN_ENTRIES);
    int keys = entries * KEY_SPACE_PER_ENTRY;
    popularity = new Zipf(keys, POPULARITY_EXPONENT);
    // Popular keys are spread over the key space rather than being the lowest ids.
    keyOfRank = new int[keys];
    for (int i = 0; i < keys; i++) {
      keyOfRank[i] = i;
    }
    for (int i = keys - 1; i > 0; i--) {
      int j = random.nextInt(i + 1);
      int swap = keyOfRank[i];
      keyOfRank[i] = keyOfRank[j];
      keyOfRank[j] = swap;
    }
    cache = Caffeine.newBuilder().maximumSize(entries).recordStats().build();
    CaffeineCacheMetrics.monitor(registry, cache, "price-sheets", List.of());
    sha256 = MessageDigest.getInstance("SHA-256");
  }

  /**
   * Loads by serving the traffic the cache would see until it is full, then as much again, so it
   * starts at its bound and skewed instead of filling (its live set growing) while it is measured.
   */
  @Override
  public void load() {
    long limit = (long) entries * MAX_WARMING_OPERATIONS_PER_ENTRY;
    long operations = 0;
    while (operations < limit && cache.estimatedSize() < entries) {
      operate();
      operations++;
    }
    for (long i = 0; i < operations; i++) {
      operate();
    }
    cache.cleanUp();
  }

  @Override
  public void operate() {
    long key = keyOfRank[popularity.sample(random)];
    cache.get(key, this::render);
  }

  private PriceSheet render(long productId) {
    SplittableRandom backend = new SplittableRandom(productId ^ settings.seed());
    String category = Catalogue.CATEGORIES.get((int) (productId % Catalogue.CATEGORIES.size()));
    int[] tiers = new int[PRICE_TIERS];
    int price = 1 + backend.nextInt(MAX_LIST_PRICE_CENTS);
    for (int i = 0; i < PRICE_TIERS; i++) {
      tiers[i] = price;
      // Each quantity break takes a few percent off, as volume pricing does.
      price = price * (PERCENT - 1 - backend.nextInt(MAX_TIER_DISCOUNT_PERCENT)) / PERCENT;
    }
    int low = settings.scaledCost(MIN_FRAGMENT_BYTES, 1);
    int high = Math.max(low + 1, settings.scaledCost(MAX_FRAGMENT_BYTES, 2));
    StringBuilder html = new StringBuilder("<table class=\"tiers\">");
    int size = low + backend.nextInt(high - low);
    while (html.length() < size) {
      html.append("<tr><td>")
          .append(catalogue.word(random))
          .append("</td><td>")
          .append(tiers[html.length() % PRICE_TIERS])
          .append("</td></tr>");
    }
    byte[] fragment = html.append("</table>").toString().getBytes(StandardCharsets.UTF_8);
    return new PriceSheet(
        productId,
        Catalogue.sku(category, productId),
        Catalogue.pick(Catalogue.MATERIALS, backend)
            + " "
            + category
            + " "
            + catalogue.text(random, 4),
        tiers,
        fragment,
        sha256.digest(fragment));
  }
}
