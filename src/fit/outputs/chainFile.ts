/**
 * chain.h5: the raw samples of a fit in HDF5, for users who analyse them elsewhere (layout in
 * docs/chain-layout.md). Ensemble chains go to the root (`/chain`, `/log_posterior`,
 * `/log_likelihood` and attributes), nested samples to the group `/nested`.
 *
 * h5wasm writes to an in-memory file system: the file is built there, closed, and its bytes are
 * copied to the destination with an atomic write, so an interrupted run never leaves half a file.
 * Arrays are stored C-ordered (last index fastest), as h5py and numpy read them.
 * Reference: HDF5 File Format Specification 3.0 (The HDF Group); h5wasm 0.10 API.
 */
import type H5wasmLib from "h5wasm";
import { writeFileAtomic } from "../../io/atomicWrite.js";
import type { ChainOutput, NestedOutput } from "../outcome.js";

/** Value of the root `format` attribute, so a reader can tell this layout from others. */
export const CHAIN_FORMAT = "arcfringe-chain";
/** Bumped when the layout changes incompatibly. */
export const CHAIN_FORMAT_VERSION = 1;

type H5Lib = typeof H5wasmLib;
type H5Module = Awaited<H5Lib["ready"]>;

interface H5 {
  lib: H5Lib;
  module: H5Module;
}
let loading: Promise<H5> | undefined;
let tempCounter = 0;

/** Load h5wasm once (a large wasm module), with errors thrown rather than printed. */
function h5(): Promise<H5> {
  loading ??= import("h5wasm").then(async (mod) => {
    const lib = mod.default;
    const module = await lib.ready;
    module.activate_throwing_error_handler();
    return { lib, module };
  });
  return loading;
}

/** What goes into chain.h5. */
export interface ChainFileContent {
  /** Parameter names, one per dimension (`lens[0].theta_E`, ...). */
  names: readonly string[];
  /** Units, one per dimension ("arcsec", "deg", "Jy", ""). */
  units: readonly string[];
  chain?: ChainOutput;
  nested?: NestedOutput;
}

/**
 * Encode the chain file as HDF5 bytes.
 * @throws RangeError when array lengths disagree with the declared shapes (a bug upstream)
 * Reference: docs/chain-layout.md.
 */
export async function encodeChainFile(content: ChainFileContent): Promise<Uint8Array> {
  const { chain, nested, names } = content;
  if (!chain && !nested) throw new RangeError("encodeChainFile: neither an ensemble chain nor nested samples to write");
  checkShapes(content);
  const { lib, module } = await h5();
  const tmp = `/arcfringe-chain-${process.pid}-${tempCounter++}.h5`;
  const file = new lib.File(tmp, "w");
  try {
    file.create_attribute("format", CHAIN_FORMAT);
    file.create_attribute("format_version", CHAIN_FORMAT_VERSION, [], "<i");
    file.create_attribute("parameter_names", [...names]);
    file.create_attribute("parameter_units", [...content.units]);
    if (chain) {
      const { nSteps: s, nWalkers: w, dim } = chain;
      file.create_dataset({ name: "chain", data: chain.chain, shape: [s, w, dim], dtype: "<d" });
      file.create_dataset({ name: "log_posterior", data: chain.logPosterior, shape: [s, w], dtype: "<d" });
      file.create_dataset({ name: "log_likelihood", data: chain.logLikelihood, shape: [s, w], dtype: "<d" });
      file.create_attribute("burn_in", chain.burnIn, [], "<i");
      file.create_attribute("tau", Float64Array.from(chain.tau), [dim], "<d");
      file.create_attribute("acceptance_fraction", Float64Array.from(chain.acceptanceFraction), [w], "<d");
      // HDF5 has no boolean type; 0/1 in a signed byte reads as an integer everywhere.
      file.create_attribute("converged", chain.converged ? 1 : 0, [], "<b");
    }
    if (nested) {
      const g = file.create_group("nested");
      g.create_dataset({ name: "samples", data: nested.samples, shape: [nested.nSamples, nested.dim], dtype: "<d" });
      g.create_dataset({ name: "log_weights", data: nested.logWeights, shape: [nested.nSamples], dtype: "<d" });
      g.create_dataset({ name: "log_likelihood", data: nested.logLikelihood, shape: [nested.nSamples], dtype: "<d" });
      g.create_attribute("log_evidence", nested.logEvidence, [], "<d");
      g.create_attribute("log_evidence_error", nested.logEvidenceError, [], "<d");
    }
  } finally {
    file.close();
  }
  try {
    // Copy out of the wasm heap: the FS buffer is freed by the unlink below.
    return Uint8Array.from(module.FS.readFile(tmp));
  } finally {
    module.FS.unlink(tmp);
  }
}

/**
 * Write chain.h5 to `path` atomically.
 * Reference: docs/chain-layout.md.
 */
export async function writeChainFile(path: string, content: ChainFileContent): Promise<void> {
  writeFileAtomic(path, await encodeChainFile(content));
}

function checkShapes({ chain, nested, names }: ChainFileContent): void {
  const bad = (what: string, got: number, want: number): never => {
    throw new RangeError(`chain file: ${what} has ${got} values; expected ${want}`);
  };
  if (chain) {
    const { nSteps: s, nWalkers: w, dim } = chain;
    if (names.length !== dim) bad("parameter_names", names.length, dim);
    if (chain.chain.length !== s * w * dim) bad("chain", chain.chain.length, s * w * dim);
    if (chain.logPosterior.length !== s * w) bad("log_posterior", chain.logPosterior.length, s * w);
    if (chain.logLikelihood.length !== s * w) bad("log_likelihood", chain.logLikelihood.length, s * w);
    if (chain.tau.length !== dim) bad("tau", chain.tau.length, dim);
    if (chain.acceptanceFraction.length !== w) bad("acceptance_fraction", chain.acceptanceFraction.length, w);
  }
  if (nested) {
    if (names.length !== nested.dim) bad("parameter_names", names.length, nested.dim);
    if (nested.samples.length !== nested.nSamples * nested.dim) bad("nested/samples", nested.samples.length, nested.nSamples * nested.dim);
    if (nested.logWeights.length !== nested.nSamples) bad("nested/log_weights", nested.logWeights.length, nested.nSamples);
    if (nested.logLikelihood.length !== nested.nSamples) bad("nested/log_likelihood", nested.logLikelihood.length, nested.nSamples);
  }
}
