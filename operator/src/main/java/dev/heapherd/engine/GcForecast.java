package dev.heapherd.engine;

/**
 * Predicted GC seconds per hour under the current heaps, the proposal and the two comparison rules.
 *
 * @param current at the heaps the pods run with now
 * @param proposed at the proposed heaps
 * @param linearRule at heaps from the linear rule {@code E = m * L} with one m for the pool
 * @param equalSplit at one equal heap for every pod
 */
public record GcForecast(double current, double proposed, double linearRule, double equalSplit) {}
