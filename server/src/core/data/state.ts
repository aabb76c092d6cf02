/**
 * The device data environment as the standards define it, per array: reference counts
 * (OpenACC 3.3 §2.6.7: structured and dynamic; present while their sum is positive; OpenMP
 * 5.2 reference counts the same way) and, for coherence, which elements each side holds the
 * newest copy of.
 */
import type { Region } from './regions';

export class ArrayState {
  private structuredCount = 0;
  private dynamicCount = 0;
  /** Elements the device wrote since the host last received them. */
  deviceNewer: Region = [];
  /** Elements the host wrote since the device last received them. */
  hostNewer: Region = [];
  /** Identifies one lifetime of the device copy (from allocation to release). */
  allocation = 0;
  /** Told when the array becomes present (its environment's index of present arrays). */
  onPresent?: () => void;

  get structured(): number {
    return this.structuredCount;
  }

  set structured(n: number) {
    this.structuredCount = n;
    if (n > 0) this.onPresent?.();
  }

  get dynamic(): number {
    return this.dynamicCount;
  }

  set dynamic(n: number) {
    this.dynamicCount = n;
    if (n > 0) this.onPresent?.();
  }

  get present(): boolean {
    return this.structuredCount + this.dynamicCount > 0;
  }
}

export class DataEnvironment {
  private readonly arrays = new Map<string, ArrayState>();
  /** Each key's place in `arrays` (the order present keys are listed in). */
  private readonly order = new Map<string, number>();
  /**
   * The keys that became present since they were last listed as absent: presentKeys reads these
   * instead of every array the run touched (a program that runs a thousand procedures touches
   * thousands of arrays, and its entry states list the present ones at every call).
   */
  private readonly maybePresent = new Set<string>();
  private nextAllocation = 1;

  private watch(key: string, s: ArrayState): void {
    s.onPresent = () => this.maybePresent.add(key);
    if (s.present) this.maybePresent.add(key);
  }

  state(key: string): ArrayState {
    let s = this.arrays.get(key);
    if (!s) {
      s = new ArrayState();
      this.order.set(key, this.order.size);
      this.arrays.set(key, s);
      this.watch(key, s);
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
    if (!this.order.has(key)) this.order.set(key, this.order.size);
    this.arrays.set(key, state);
    this.watch(key, state);
    this.nextAllocation = Math.max(this.nextAllocation, state.allocation + 1);
  }

  /** The present arrays' keys, in the order the run first touched them. */
  presentKeys(): string[] {
    const out: string[] = [];
    for (const k of this.maybePresent) {
      if (this.arrays.get(k)!.present) out.push(k);
      else this.maybePresent.delete(k);
    }
    return out.length > 1 ? out.sort((a, b) => this.order.get(a)! - this.order.get(b)!) : out;
  }
}
