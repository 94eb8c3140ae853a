package dev.heapherd.nodeagent;

import java.util.Map;

/** One Prometheus scrape target: a container's {@code 127.0.0.1:port} and its labels. */
record Target(String hostPort, Map<String, String> labels) {}
