#!/usr/bin/env python3
"""A camera process of our own for the shared-memory frame test: writes frames into a weft frame
file (the layout in docs/ports.md, "Shared-memory frames") with numpy.memmap.

Frame k (from 1) holds byte (i + k) mod 251 at index i, so a frame mixed from two writes shows.
Its time stamp is time.monotonic_ns() (CLOCK_MONOTONIC, the clock Java's System.nanoTime reads
on Linux).

Usage: frame_writer.py FILE SLOTS HEIGHT WIDTH CHANNELS RATE_HZ SECONDS
  RATE_HZ 0 writes back to back, holding each slot "being written" for 2 ms (a slow write) and
  pausing 0.2 ms after each frame: with one slot, a reader that finds a new frame number mostly
  finds the slot already being rewritten, and now and then finds it finished.
"""
import struct
import sys
import time

import numpy as np


def main():
    path = sys.argv[1]
    slots, h, w, c = (int(v) for v in sys.argv[2:6])
    rate, seconds = float(sys.argv[6]), float(sys.argv[7])
    frame_bytes = h * w * c
    stride = 64 + (frame_bytes + 63) // 64 * 64
    size = 64 + slots * stride
    with open(path + ".part", "wb") as f:
        f.truncate(size)
    mm = np.memmap(path + ".part", dtype=np.uint8, mode="r+", shape=(size,))
    fmt = 2 if c == 1 else 0
    mm[0:40] = np.frombuffer(struct.pack("<8sIIIIIIQ", b"WEFTIMG1", 1, slots, h, w, c, fmt, stride), dtype=np.uint8)
    words = mm.view(np.uint64)
    stamps = mm.view(np.int64)
    mm.flush()
    import os
    os.replace(path + ".part", path)  # the reader finds a whole header or no file

    base = (np.arange(frame_bytes, dtype=np.int64) % 251).astype(np.uint16)
    start = time.monotonic()
    k = 0
    while time.monotonic() - start < seconds:
        k += 1
        slot = k % slots
        at = 64 + slot * stride
        word = at // 8
        words[word] = 2 * k - 1                  # being written
        if rate <= 0:
            time.sleep(0.002)
        stamps[word + 1] = time.monotonic_ns()
        words[word + 2] = k
        mm[at + 64:at + 64 + frame_bytes] = ((base + (k % 251)) % 251).astype(np.uint8)
        words[word] = 2 * k                      # finished
        words[5] = k                             # the latest frame (header byte 40)
        if rate > 0:
            next_at = start + k / rate
            pause = next_at - time.monotonic()
            if pause > 0:
                time.sleep(pause)
        else:
            time.sleep(0.0002)
    print(k)


if __name__ == "__main__":
    main()
