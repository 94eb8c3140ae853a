package dev.heapherd.synthetic;

import java.io.IOException;
import java.lang.management.GarbageCollectorMXBean;
import java.lang.management.ManagementFactory;
import java.lang.management.MemoryPoolMXBean;
import java.lang.management.MemoryType;
import java.lang.management.MemoryUsage;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/** Assembles {@link Truth} from the workload's counters and the JDK's management beans. */
final class TruthReader {

  /** Linux reports VmRSS in kB, meaning KiB. */
  static final long BYTES_PER_KIB = 1024;

  /** Where Linux reports this process's resident set size. */
  static final Path PROC_SELF_STATUS = Path.of("/proc/self/status");

  private final WorkloadOptions options;
  private final LiveSet liveSet;
  private final AllocationDriver driver;
  private final ReadySignal readySignal;
  private final long baselineLiveBytes;

  TruthReader(
      WorkloadOptions options,
      LiveSet liveSet,
      AllocationDriver driver,
      ReadySignal readySignal,
      long baselineLiveBytes) {
    this.baselineLiveBytes = baselineLiveBytes;
    this.options = options;
    this.liveSet = liveSet;
    this.driver = driver;
    this.readySignal = readySignal;
  }

  Truth read() {
    List<String> collectorNames = new ArrayList<>();
    Map<String, Truth.CollectorTotals> collectors = new LinkedHashMap<>();
    for (GarbageCollectorMXBean collector : ManagementFactory.getGarbageCollectorMXBeans()) {
      collectorNames.add(collector.getName());
      collectors.put(
          collector.getName(),
          new Truth.CollectorTotals(collector.getCollectionCount(), collector.getCollectionTime()));
    }
    Map<String, Truth.HeapPoolUsage> heapPools = new LinkedHashMap<>();
    for (MemoryPoolMXBean pool : ManagementFactory.getMemoryPoolMXBeans()) {
      if (pool.getType() == MemoryType.HEAP) {
        MemoryUsage usage = pool.getUsage();
        MemoryUsage afterGc = pool.getCollectionUsage();
        heapPools.put(
            pool.getName(),
            new Truth.HeapPoolUsage(
                usage.getUsed(),
                usage.getCommitted(),
                usage.getMax(),
                afterGc == null ? -1 : afterGc.getUsed()));
      }
    }
    LiveSet.Held held = liveSet.measure();
    return new Truth(
        ProcessHandle.current().pid(),
        ManagementFactory.getRuntimeMXBean().getUptime(),
        options.instrumentation().optionValue(),
        readySignal.isReady(),
        options.liveBytes(),
        held.heapBytes(),
        baselineLiveBytes,
        held.payloadBytes(),
        held.arrays(),
        options.replaceBytesPerSecond(),
        options.garbageBytesPerSecond(),
        driver.replacedBytesTotal(),
        driver.garbageBytesTotal(),
        driver.allocatingSeconds(),
        Runtime.getRuntime().maxMemory(),
        maxHeapSizeBytes(),
        collectorNames,
        collectors,
        heapPools,
        residentSetBytes());
  }

  /**
   * The VM's MaxHeapSize option: the -Xmx it runs with, after its own alignment. Unlike
   * Runtime.maxMemory it does not leave out a survivor space, so it compares with -Xmx under every
   * collector. -1 on a VM without the HotSpot diagnostic bean.
   */
  static long maxHeapSizeBytes() {
    var bean =
        ManagementFactory.getPlatformMXBean(com.sun.management.HotSpotDiagnosticMXBean.class);
    if (bean == null) {
      return -1;
    }
    return Long.parseLong(bean.getVMOption("MaxHeapSize").getValue());
  }

  /** The resident set size from /proc, or -1 where there is no /proc (not Linux). */
  static long residentSetBytes() {
    try {
      for (String line : Files.readAllLines(PROC_SELF_STATUS)) {
        if (line.startsWith("VmRSS:")) {
          String kib = line.substring("VmRSS:".length()).trim().split("\\s+")[0];
          return Long.parseLong(kib) * BYTES_PER_KIB;
        }
      }
    } catch (IOException | RuntimeException e) {
      // No /proc or an unexpected format: report unknown rather than fail the endpoint.
    }
    return -1;
  }
}
