package dev.heapherd.synthetic;

import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;

class HeapLayoutTest {

  @Test
  void compressedLayoutMatchesHotSpotsSixteenByteArrayHeader() {
    HeapLayout layout = new HeapLayout(16, 8, 4);

    assertThat(layout.byteArrayBytes(64)).isEqualTo(80);
    assertThat(layout.byteArrayBytes(1)).isEqualTo(24);
    assertThat(layout.byteArrayBytes(0)).isEqualTo(16);
    assertThat(layout.referenceArrayBytes(3)).isEqualTo(32);
  }

  @Test
  void uncompressedReferencesTakeAWordEach() {
    HeapLayout layout = new HeapLayout(24, 8, 8);

    assertThat(layout.byteArrayBytes(64)).isEqualTo(88);
    assertThat(layout.referenceArrayBytes(3)).isEqualTo(48);
  }

  @Test
  void readsTheRunningVm() {
    HeapLayout layout = HeapLayout.ofRunningVm();

    assertThat(layout.arrayHeaderBytes()).isIn(16, 24);
    assertThat(layout.objectAlignmentBytes()).isPositive();
    assertThat(layout.referenceBytes()).isIn(4, 8);
  }
}
