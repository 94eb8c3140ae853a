package dev.heapherd.engine;

/**
 * The allocator's answer for one workload.
 *
 * @param workload the inputs
 * @param bounds the interval the heap could take
 * @param optimalHeapBytes the exact (unrounded) optimum within the bounds
 * @param heapBytes proposed heap per pod, whole MiB
 * @param limitBytes proposed container memory limit per pod, whole MiB
 * @param bound which constraint decided the heap
 * @param linearRuleHeapBytes heap per pod under the linear rule, for comparison
 * @param equalSplitHeapBytes heap per pod under an equal split, for comparison
 * @param gcSecondsPerHour predicted GC time over all replicas
 */
public record WorkloadPlan(
    Workload workload,
    HeapBounds bounds,
    double optimalHeapBytes,
    long heapBytes,
    long limitBytes,
    Bound bound,
    long linearRuleHeapBytes,
    long equalSplitHeapBytes,
    GcForecast gcSecondsPerHour) {}
