package dev.heapherd.synthetic;

/**
 * One kind of object in the mix: byte arrays of {@code payloadBytes} elements taking {@code
 * byteFraction} of the bytes the workload holds or allocates.
 */
public record SizeClass(int payloadBytes, double byteFraction) {}
