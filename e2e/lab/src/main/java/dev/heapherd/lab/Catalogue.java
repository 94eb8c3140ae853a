package dev.heapherd.lab;

import java.util.List;
import java.util.Locale;
import java.util.random.RandomGenerator;

/**
 * Generated text for the lab's invented scenario: Kestrel Valley Fittings, a made-up maker of
 * pumps, valves and hydraulic parts. Descriptions mix a fixed trade vocabulary with coined words
 * drawn with Zipf frequencies, so term statistics look like real text.
 */
public final class Catalogue {

  /** Coined words in the vocabulary: enough for a long tail of rare terms, as real text has. */
  static final int COINED_WORDS = 20_000;

  /** Zipf exponent of word frequency; about 1 in natural-language corpora (Zipf's law). */
  static final double WORD_FREQUENCY_EXPONENT = 1.0;

  /** Syllables coined words are built from. */
  private static final List<String> SYLLABLES =
      List.of(
          "ka", "ro", "ven", "tal", "mi", "dor", "sek", "lu", "bra", "thi", "gon", "pel", "ast",
          "ur", "fen", "qui", "mos", "dal", "rek", "io", "vor", "san", "tek", "ol", "bri", "nex");

  /** Part categories of the catalogue. */
  public static final List<String> CATEGORIES =
      List.of(
          "valve",
          "gasket",
          "bearing",
          "impeller",
          "coupling",
          "seal",
          "flange",
          "hose",
          "filter",
          "manifold",
          "actuator",
          "sensor",
          "bushing",
          "nozzle",
          "regulator",
          "strainer");

  /** Materials parts come in. */
  public static final List<String> MATERIALS =
      List.of(
          "brass",
          "bronze",
          "stainless",
          "cast-iron",
          "nitrile",
          "viton",
          "ptfe",
          "duplex",
          "aluminium",
          "polymer");

  /** Regions customers order from. */
  public static final List<String> REGIONS =
      List.of("north", "south", "east", "west", "coast", "highland", "delta", "plains");

  /** Trade words that appear often in descriptions. */
  private static final List<String> TRADE_WORDS =
      List.of(
          "pressure",
          "rated",
          "thread",
          "bore",
          "max",
          "flow",
          "inlet",
          "outlet",
          "spring",
          "replacement",
          "kit",
          "heavy",
          "duty",
          "marine",
          "food",
          "grade",
          "low",
          "high",
          "temperature",
          "compatible",
          "series",
          "mount",
          "quarter",
          "turn",
          "ball",
          "gate",
          "check",
          "butterfly",
          "seat",
          "stem",
          "body",
          "port",
          "metric",
          "imperial",
          "pump",
          "hydraulic");

  private final String[] words;
  private final Zipf frequency;
  private final Zipf coinedFrequency;

  /** A catalogue vocabulary fixed by {@code random}. */
  public Catalogue(RandomGenerator random) {
    words = new String[TRADE_WORDS.size() + COINED_WORDS];
    // Trade words take the most frequent ranks, coined words the tail.
    for (int i = 0; i < TRADE_WORDS.size(); i++) {
      words[i] = TRADE_WORDS.get(i);
    }
    for (int i = TRADE_WORDS.size(); i < words.length; i++) {
      words[i] = coin(random);
    }
    frequency = new Zipf(words.length, WORD_FREQUENCY_EXPONENT);
    coinedFrequency = new Zipf(COINED_WORDS, WORD_FREQUENCY_EXPONENT);
  }

  /**
   * A word someone searches for: a coined (specific) word with its Zipf frequency, never one of the
   * trade words nearly every description contains, as search terms are mostly specific.
   */
  public String queryWord(RandomGenerator random) {
    return words[TRADE_WORDS.size() + coinedFrequency.sample(random)];
  }

  /** One word drawn with its Zipf frequency. */
  public String word(RandomGenerator random) {
    return words[frequency.sample(random)];
  }

  /** {@code count} words separated by spaces. */
  public String text(RandomGenerator random, int count) {
    StringBuilder out = new StringBuilder();
    for (int i = 0; i < count; i++) {
      if (i > 0) {
        out.append(' ');
      }
      out.append(word(random));
    }
    return out.toString();
  }

  /** A part number such as {@code KV-VAL-004211}. */
  public static String sku(String category, long id) {
    return String.format(
        Locale.ROOT, "KV-%s-%06d", category.substring(0, 3).toUpperCase(Locale.ROOT), id);
  }

  /** A uniformly chosen element of {@code list}. */
  public static <T> T pick(List<T> list, RandomGenerator random) {
    return list.get(random.nextInt(list.size()));
  }

  private static String coin(RandomGenerator random) {
    // Two to four syllables: words of 4 to 12 letters, like the words of a trade catalogue.
    int syllables = 2 + random.nextInt(3);
    StringBuilder word = new StringBuilder();
    for (int i = 0; i < syllables; i++) {
      word.append(pick(SYLLABLES, random));
    }
    return word.toString();
  }
}
