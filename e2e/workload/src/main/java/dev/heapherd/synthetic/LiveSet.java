package dev.heapherd.synthetic;

import java.util.List;
import java.util.concurrent.atomic.AtomicReferenceArray;

/**
 * The objects the workload keeps alive: per size class a fixed number of byte arrays, replaced
 * oldest first so that every replaced array has lived as long as the turnover allows and has been
 * promoted, which is what makes the replacement rate a promotion rate.
 */
final class LiveSet {

  private final List<SizeClass> classes;
  private final HeapLayout layout;
  private final ArrayToucher toucher;
  private final AtomicReferenceArray<byte[]>[] slotsByClass;
  private final int[] nextToReplace;

  /** Plans slot counts so the arrays plus their holders take about {@code liveBytes} of heap. */
  @SuppressWarnings("unchecked")
  LiveSet(ObjectSizeMix mix, long liveBytes, HeapLayout layout, ArrayToucher toucher) {
    this.classes = mix.classes();
    this.layout = layout;
    this.toucher = toucher;
    this.slotsByClass = new AtomicReferenceArray[classes.size()];
    this.nextToReplace = new int[classes.size()];
    for (int index = 0; index < classes.size(); index++) {
      SizeClass sizeClass = classes.get(index);
      // Each array also costs one reference in its holder.
      long bytesPerArray =
          layout.byteArrayBytes(sizeClass.payloadBytes()) + layout.referenceBytes();
      long count = (long) (liveBytes * sizeClass.byteFraction() / bytesPerArray);
      if (count > Integer.MAX_VALUE) {
        throw new IllegalArgumentException(
            "the live set needs more than " + Integer.MAX_VALUE + " arrays of one size");
      }
      slotsByClass[index] = new AtomicReferenceArray<>((int) count);
    }
  }

  /** Allocates every slot; may throw OutOfMemoryError when the heap is too small. */
  void build() {
    for (int index = 0; index < classes.size(); index++) {
      AtomicReferenceArray<byte[]> slots = slotsByClass[index];
      int payloadBytes = classes.get(index).payloadBytes();
      for (int slot = 0; slot < slots.length(); slot++) {
        slots.set(slot, toucher.newTouchedArray(payloadBytes));
      }
    }
  }

  /**
   * Replaces {@code counts[i]} arrays of class i with new ones and returns the heap bytes
   * allocated; classes too rare to hold even one array are skipped.
   */
  long replace(int[] counts) {
    long allocatedBytes = 0;
    for (int index = 0; index < counts.length; index++) {
      AtomicReferenceArray<byte[]> slots = slotsByClass[index];
      if (slots.length() == 0) {
        continue;
      }
      int payloadBytes = classes.get(index).payloadBytes();
      for (int made = 0; made < counts[index]; made++) {
        slots.set(nextToReplace[index], toucher.newTouchedArray(payloadBytes));
        nextToReplace[index] = (nextToReplace[index] + 1) % slots.length();
        allocatedBytes += layout.byteArrayBytes(payloadBytes);
      }
    }
    return allocatedBytes;
  }

  /** Counts what is held right now by walking every slot. */
  Held measure() {
    long heapBytes = 0;
    long payloadBytes = 0;
    long arrays = 0;
    for (AtomicReferenceArray<byte[]> slots : slotsByClass) {
      heapBytes += layout.referenceArrayBytes(slots.length());
      for (int slot = 0; slot < slots.length(); slot++) {
        byte[] array = slots.get(slot);
        if (array != null) {
          heapBytes += layout.byteArrayBytes(array.length);
          payloadBytes += array.length;
          arrays++;
        }
      }
    }
    return new Held(heapBytes, payloadBytes, arrays);
  }

  /** What the live set holds: heap bytes (headers and holders included), payload and arrays. */
  record Held(long heapBytes, long payloadBytes, long arrays) {}
}
