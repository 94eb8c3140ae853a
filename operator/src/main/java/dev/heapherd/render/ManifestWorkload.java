package dev.heapherd.render;

import dev.heapherd.observe.PoolWorkload;

/**
 * A workload of the pool and where its manifest is.
 *
 * @param file the index of its file among the manifest files
 * @param document the index of its document in that file
 */
record ManifestWorkload(int file, int document, PoolWorkload workload) {}
