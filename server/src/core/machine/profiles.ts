/**
 * Machine profiles: the host, the device and the link between them. Built-in presets are named
 * by technology class, not by product; their figures are datasheet-class numbers quoted from
 * memory (each field says so) and are meant to be replaced by a measured host profile
 * (`offload-ledger calibrate`) and the user's own device and link figures. Prices are never
 * built in: cost figures appear only when a profile gives a price.
 */

export interface HostProfile {
  name: string;
  description: string;
  cores: number;
  /** Sustained memory bandwidth of the whole node, bytes/s (actual traffic, write-allocate included). */
  bandwidthNode: number;
  /** Sustained memory bandwidth one core reaches alone, bytes/s. */
  bandwidthCore: number;
  /** Peak double-precision flop/s of the node; single precision is twice this unless given. */
  peakFlopsNode: number;
  peakFlopsNodeSingle?: number;
  /** Cache one core's run can count on for layer conditions (its L2 plus its share of L3), bytes. */
  cacheBytesPerCore: number;
  memoryBytes: number;
  costPerNodeHour?: number;
  sources: string[];
}

export interface DeviceProfile {
  name: string;
  description: string;
  /** Sustained device memory bandwidth, bytes/s. */
  bandwidth: number;
  peakFlops: number;
  peakFlopsSingle: number;
  memoryBytes: number;
  /** Cost of one kernel launch, seconds. */
  launchSeconds: number;
  devicesPerNode: number;
  /** Price of one node-hour of a node with `devicesPerNode` devices. */
  costPerNodeHour?: number;
  sources: string[];
}

export interface LinkProfile {
  name: string;
  description: string;
  /** Bandwidth per direction, bytes/s (theoretical; efficiency bounds apply in the estimates). */
  bandwidth: number;
  /** Fixed cost of one transfer, seconds. */
  latencySeconds: number;
  sources: string[];
}

export interface MachineProfile {
  name: string;
  host: HostProfile;
  device: DeviceProfile;
  link: LinkProfile;
}

const GB = 1e9;
const GiB = 2 ** 30;
const MiB = 2 ** 20;

/**
 * PCIe x16 bandwidth per direction from the transfer rate and the 128b/130b encoding of Gen3
 * and later (PCI-SIG base specification): GT/s × 16 lanes × 128/130 / 8 bits.
 */
export function pcieX16Bandwidth(gigaTransfersPerSecond: number): number {
  return (gigaTransfersPerSecond * 1e9 * 16 * 128) / 130 / 8;
}

export const LINKS: Record<string, LinkProfile> = {
  'pcie3-x16': {
    name: 'pcie3-x16', description: 'PCIe Gen3 x16 (8 GT/s per lane)', bandwidth: pcieX16Bandwidth(8), latencySeconds: 10e-6,
    sources: ['PCI-SIG base specification: 8 GT/s, 128b/130b encoding', 'latency of one host-device copy ~10 µs (from memory)'],
  },
  'pcie4-x16': {
    name: 'pcie4-x16', description: 'PCIe Gen4 x16 (16 GT/s per lane)', bandwidth: pcieX16Bandwidth(16), latencySeconds: 10e-6,
    sources: ['PCI-SIG base specification: 16 GT/s, 128b/130b encoding', 'latency of one host-device copy ~10 µs (from memory)'],
  },
  'pcie5-x16': {
    name: 'pcie5-x16', description: 'PCIe Gen5 x16 (32 GT/s per lane)', bandwidth: pcieX16Bandwidth(32), latencySeconds: 10e-6,
    sources: ['PCI-SIG base specification: 32 GT/s, 128b/130b encoding', 'latency of one host-device copy ~10 µs (from memory)'],
  },
};

export const HOSTS: Record<string, HostProfile> = {
  'ddr4-2s': {
    name: 'ddr4-2s', description: 'two-socket server, 2 × 8 channels DDR4-3200, 64 cores',
    cores: 64, bandwidthNode: 300 * GB, bandwidthCore: 12 * GB, peakFlopsNode: 64 * 2.3e9 * 16, cacheBytesPerCore: 1.5 * MiB, memoryBytes: 512 * GiB,
    sources: ['8 channels × 25.6 GB/s × 2 sockets = 409.6 GB/s theoretical; ~75% sustained (from memory)', 'single-core sustained 10–15 GB/s (from memory)', '16 double flop/cycle/core (2 × 256-bit FMA) at 2.3 GHz (from memory)'],
  },
  'ddr5-2s': {
    name: 'ddr5-2s', description: 'two-socket server, 2 × 8 channels DDR5-4800, 96 cores',
    cores: 96, bandwidthNode: 460 * GB, bandwidthCore: 14 * GB, peakFlopsNode: 96 * 2.0e9 * 32, cacheBytesPerCore: 3.5 * MiB, memoryBytes: 1024 * GiB,
    sources: ['8 channels × 38.4 GB/s × 2 sockets = 614.4 GB/s theoretical; ~75% sustained (from memory)', 'single-core sustained 10–20 GB/s (from memory)', '32 double flop/cycle/core (2 × 512-bit FMA) at 2.0 GHz (from memory)', '2 MiB L2 + ~1.5 MiB L3 share per core (from memory)'],
  },
};

export const DEVICES: Record<string, DeviceProfile> = {
  'hbm2e-80g': {
    name: 'hbm2e-80g', description: 'data-center GPU with 80 GB HBM2e',
    bandwidth: 1.7e12, peakFlops: 9.7e12, peakFlopsSingle: 19.5e12, memoryBytes: 80 * GB, launchSeconds: 5e-6, devicesPerNode: 4,
    sources: ['~2.0 TB/s theoretical HBM2e, ~85% sustained in STREAM-like kernels (from memory)', '9.7 TFlop/s FP64 vector, 19.5 TFlop/s FP32 (datasheet class, from memory)', 'kernel launch 3–10 µs (from memory)'],
  },
  'hbm3-80g': {
    name: 'hbm3-80g', description: 'data-center GPU with 80 GB HBM3',
    bandwidth: 2.9e12, peakFlops: 34e12, peakFlopsSingle: 67e12, memoryBytes: 80 * GB, launchSeconds: 5e-6, devicesPerNode: 4,
    sources: ['~3.35 TB/s theoretical HBM3, ~85% sustained (from memory)', '34 TFlop/s FP64 vector, 67 TFlop/s FP32 (datasheet class, from memory)', 'kernel launch 3–10 µs (from memory)'],
  },
  'gddr6-48g': {
    name: 'gddr6-48g', description: 'workstation GPU with 48 GB GDDR6',
    bandwidth: 0.73e12, peakFlops: 1.2e12, peakFlopsSingle: 38e12, memoryBytes: 48 * GB, launchSeconds: 5e-6, devicesPerNode: 2,
    sources: ['~864 GB/s theoretical GDDR6, ~85% sustained (from memory)', 'FP64 at 1/32 of FP32, 38 TFlop/s FP32 (datasheet class, from memory)'],
  },
};

/** Built-in machines: a host, a device and a link, named by technology class. */
export const PRESETS: Record<string, { host: string; device: string; link: string; description: string }> = {
  'pcie4-hbm2e': { host: 'ddr5-2s', device: 'hbm2e-80g', link: 'pcie4-x16', description: 'DDR5 two-socket host, HBM2e-class GPUs on PCIe Gen4' },
  'pcie5-hbm3': { host: 'ddr5-2s', device: 'hbm3-80g', link: 'pcie5-x16', description: 'DDR5 two-socket host, HBM3-class GPUs on PCIe Gen5' },
  'pcie3-ddr4-hbm2e': { host: 'ddr4-2s', device: 'hbm2e-80g', link: 'pcie3-x16', description: 'DDR4 two-socket host, HBM2e-class GPUs on PCIe Gen3' },
  'pcie4-gddr6': { host: 'ddr5-2s', device: 'gddr6-48g', link: 'pcie4-x16', description: 'DDR5 two-socket host, GDDR6 workstation GPUs on PCIe Gen4' },
};

export const DEFAULT_PROFILE = 'pcie4-hbm2e';

export function presetProfile(name: string): MachineProfile | undefined {
  const p = PRESETS[name];
  if (!p) return undefined;
  return { name, host: HOSTS[p.host], device: DEVICES[p.device], link: LINKS[p.link] };
}
