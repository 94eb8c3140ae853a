package dev.heapherd.nodeagent;

/** The memory limit held on one process. */
interface MemoryGuard {

  /** For containers without a memory limit. */
  MemoryGuard NONE =
      new MemoryGuard() {
        @Override
        public boolean limitExceeded() {
          return false;
        }

        @Override
        public void release() {}
      };

  /** Whether the process was killed for passing its limit; read after it exited. */
  boolean limitExceeded();

  /** Stops watching; called once the process has exited. */
  void release();
}
