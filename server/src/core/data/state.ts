/**
 * The device data environment as the standards define it, per array: reference counts
 * (OpenACC 3.3 §2.6.7: structured and dynamic; present while their sum is positive; OpenMP
 * 5.2 reference counts the same way) and, for coherence, which elements each side holds the
 * newest copy of.
 */
import type { Region } from './regions';

export class ArrayState {
  structured = 0;
  dynamic = 0;
  /** Elements the device wrote since the host last received them. */
  deviceNewer: Region = [];
  /** Elements the host wrote since the device last received them. */
  hostNewer: Region = [];
  /** Identifies one lifetime of the device copy (from allocation to release). */
  allocation = 0;

  get present(): boolean {
    return this.structured + this.dynamic > 0;
  }
}

export class DataEnvironment {
  private readonly arrays = new Map<string, ArrayState>();
  private nextAllocation = 1;

  state(key: string): ArrayState {
    let s = this.arrays.get(key);
    if (!s) {
      s = new ArrayState();
      this.arrays.set(key, s);
    }
    return s;
  }

  /** Starts a new device lifetime for the array; returns its allocation id. */
  allocate(key: string): number {
    const s = this.state(key);
    s.allocation = this.nextAllocation++;
    s.deviceNewer = [];
    s.hostNewer = [];
    return s.allocation;
  }

  /** Ends the device lifetime: the device copy is gone, so neither side can be stale. */
  release(key: string): void {
    const s = this.state(key);
    s.structured = 0;
    s.dynamic = 0;
    s.deviceNewer = [];
    s.hostNewer = [];
  }

  /** Takes over an array's state from another run (the program before a call); allocation ids stay unique. */
  adopt(key: string, state: ArrayState): void {
    this.arrays.set(key, state);
    this.nextAllocation = Math.max(this.nextAllocation, state.allocation + 1);
  }

  presentKeys(): string[] {
    return [...this.arrays].filter(([, s]) => s.present).map(([k]) => k);
  }
}
