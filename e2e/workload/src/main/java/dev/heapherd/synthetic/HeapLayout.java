package dev.heapherd.synthetic;

import com.sun.management.HotSpotDiagnosticMXBean;
import java.lang.management.ManagementFactory;

/**
 * How many heap bytes an array takes in the running HotSpot VM, so the live set is sized in the
 * bytes the collector sees rather than in payload bytes.
 */
public record HeapLayout(int arrayHeaderBytes, int objectAlignmentBytes, int referenceBytes) {

  /** The mark word that starts every object on 64-bit HotSpot. */
  static final int MARK_WORD_BYTES = 8;

  /** A class pointer when compressed class pointers are on (HotSpot's narrowKlass). */
  static final int COMPRESSED_CLASS_POINTER_BYTES = 4;

  /** A class pointer or object reference when not compressed: one 64-bit word. */
  static final int WORD_BYTES = 8;

  /** A reference when compressed oops are on (HotSpot's narrowOop). */
  static final int COMPRESSED_REFERENCE_BYTES = 4;

  /** The int length field of every array. */
  static final int ARRAY_LENGTH_BYTES = 4;

  /** HotSpot's default -XX:ObjectAlignmentInBytes, used when the VM does not say. */
  static final int DEFAULT_OBJECT_ALIGNMENT_BYTES = 8;

  /**
   * Reads compressed oops, compressed class pointers and object alignment from the running VM;
   * array data starts at the next 8-byte boundary after the header, as HotSpot's arrayOop lays it.
   */
  public static HeapLayout ofRunningVm() {
    HotSpotDiagnosticMXBean diagnostics =
        ManagementFactory.getPlatformMXBean(HotSpotDiagnosticMXBean.class);
    boolean compressedClassPointers =
        booleanOption(diagnostics, "UseCompressedClassPointers", true);
    boolean compressedOops = booleanOption(diagnostics, "UseCompressedOops", true);
    int alignment = DEFAULT_OBJECT_ALIGNMENT_BYTES;
    try {
      alignment = Integer.parseInt(diagnostics.getVMOption("ObjectAlignmentInBytes").getValue());
    } catch (IllegalArgumentException e) {
      // A VM without the option keeps HotSpot's default alignment.
    }
    int classPointerBytes = compressedClassPointers ? COMPRESSED_CLASS_POINTER_BYTES : WORD_BYTES;
    int header = alignUp(MARK_WORD_BYTES + classPointerBytes + ARRAY_LENGTH_BYTES, WORD_BYTES);
    return new HeapLayout(
        header, alignment, compressedOops ? COMPRESSED_REFERENCE_BYTES : WORD_BYTES);
  }

  /** Heap bytes of a {@code byte[payloadBytes]}. */
  public long byteArrayBytes(long payloadBytes) {
    return alignUp(arrayHeaderBytes + payloadBytes, objectAlignmentBytes);
  }

  /** Heap bytes of an array holding {@code length} references. */
  public long referenceArrayBytes(long length) {
    return alignUp(arrayHeaderBytes + length * referenceBytes, objectAlignmentBytes);
  }

  private static boolean booleanOption(
      HotSpotDiagnosticMXBean diagnostics, String name, boolean fallback) {
    try {
      return Boolean.parseBoolean(diagnostics.getVMOption(name).getValue());
    } catch (IllegalArgumentException e) {
      return fallback;
    }
  }

  private static int alignUp(int bytes, int alignment) {
    return (int) alignUp((long) bytes, alignment);
  }

  private static long alignUp(long bytes, int alignment) {
    return (bytes + alignment - 1) / alignment * alignment;
  }
}
