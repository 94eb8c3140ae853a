package dev.heapherd.observe;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;

/**
 * The first 64 bits of a SHA-256 digest of text, in hex: pod template fingerprints, proposal
 * hashes.
 */
public final class ShortHash {

  /**
   * Hex digits kept: 64 bits, enough to tell a pool's proposals or one template's versions apart.
   */
  private static final int HEX_DIGITS = 16;

  private ShortHash() {}

  /** The short hash of {@code text} in UTF-8. */
  public static String of(String text) {
    try {
      byte[] digest =
          MessageDigest.getInstance("SHA-256").digest(text.getBytes(StandardCharsets.UTF_8));
      return HexFormat.of().formatHex(digest).substring(0, HEX_DIGITS);
    } catch (NoSuchAlgorithmException e) {
      throw new IllegalStateException("every JVM provides SHA-256", e);
    }
  }
}
