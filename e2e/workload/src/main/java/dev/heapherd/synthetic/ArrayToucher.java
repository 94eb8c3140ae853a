package dev.heapherd.synthetic;

/** Writes into new arrays so each one is backed by memory the program has really used. */
final class ArrayToucher {

  /** One write per 4 KiB, the usual memory page size, is enough to dirty every page. */
  static final int TOUCH_STRIDE_BYTES = 4096;

  private byte nextValue;

  /** Allocates a {@code byte[payloadBytes]} and writes into every page of it and its last byte. */
  byte[] newTouchedArray(int payloadBytes) {
    byte[] array = new byte[payloadBytes];
    nextValue++;
    for (int offset = 0; offset < payloadBytes; offset += TOUCH_STRIDE_BYTES) {
      array[offset] = nextValue;
    }
    array[payloadBytes - 1] = nextValue;
    return array;
  }
}
