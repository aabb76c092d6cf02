/**
 * Whether two runs of one program printed the same results. Programs print timings beside their
 * results ("Avg time (s): 0.000744", "Rate (MB/s): 4302.26"), and a timing differs between any two
 * runs, so lines that are timings are not compared: lines that differ between two runs of the
 * same build (the shared-memory build run twice), and lines whose words say they are a time or a
 * rate. Everything else must be equal, line for line.
 */

export interface OutputComparison {
  same: boolean;
  /** 1-based line numbers left out of the comparison as timings. */
  ignored: number[];
  firstDifference?: { line: number; separate: string; shared: string };
}

// Words that say a line is a time or a rate. Not "time" alone: a time-stepping code prints its
// simulated time ("time 0.5 energy 1.2"), which is a result.
const TIMING = /(\belapsed\b|\bwall(time|clock)?\b|\bseconds?\b|\bsecs?\b|\((m|u|µ|n)?s\)|\brate\b|\bbandwidth\b|\bthroughput\b|\b[kmgt]i?b\/s\b|\bflops?\/s\b|\b[kmgt]flops?\b)/i;

export function compareOutputs(separate: string, shared: string, sharedAgain?: string): OutputComparison {
  const a = separate.split('\n');
  const b = shared.split('\n');
  const c = sharedAgain?.split('\n');
  const ignored: number[] = [];
  const n = Math.max(a.length, b.length);
  for (let i = 0; i < n; i++) {
    const x = a[i], y = b[i];
    if (x === y) continue;
    const unstable = c !== undefined && c[i] !== y;
    const timing = x !== undefined && y !== undefined && TIMING.test(x) && TIMING.test(y) && skeleton(x) === skeleton(y);
    if (unstable || timing) {
      ignored.push(i + 1);
      continue;
    }
    return { same: false, ignored, firstDifference: { line: i + 1, separate: x ?? '(no line)', shared: y ?? '(no line)' } };
  }
  return { same: true, ignored };
}

/** A line with its numbers taken out: two timings of one line have the same skeleton. */
function skeleton(line: string): string {
  return line.replace(/[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?/g, '#');
}
