/**
 * Builds a Lens from numbers-only model components (DESIGN.md component table), validating
 * every value. Redshifts and cosmology (the context) are needed only for `nfw` given by
 * m200/c200 and `point` given by mass.
 */
import { InputError } from "../errors.js";
import { DEFAULT_COSMOLOGY, FlatLambdaCDM, type CosmologyParams } from "../cosmo/distances.js";
import { lensDistances, nfwFromM200, pointMassThetaEArcsec, type RedshiftPair } from "../cosmo/lensing.js";
import { Epl, EPL_MIN_Q, EPL_SLOPE_MAX, EPL_SLOPE_MIN } from "./epl.js";
import { Lens } from "./lens.js";
import { Multipole } from "./multipole.js";
import { Nfw, NFW_MIN_Q } from "./nfw.js";
import { PointMass } from "./pointMass.js";
import type { MassProfile } from "./profile.js";
import { PseudoJaffe } from "./pseudoJaffe.js";
import { ExternalShear } from "./shear.js";
import { Sie } from "./sie.js";
import { AXIS_RATIO, FINITE, POSITIVE, readNumber, type ComponentInput } from "./validate.js";

/** Redshifts and cosmology, as in the model file's `redshift` and `cosmology` blocks. */
export interface LensContext {
  redshift?: RedshiftPair;
  cosmology?: CosmologyParams;
}

/** Lens component types accepted by buildLens. */
export const LENS_TYPES = ["sie", "epl", "shear", "multipole", "nfw", "point", "pseudo_jaffe"] as const;

/**
 * Build the composite lens of a model.
 * @param components numbers-only components, e.g. `{ type: "sie", theta_E: 1.2, q: 0.7, pa: 30, x: 0, y: 0 }`
 * @param ctx redshifts/cosmology (needed for nfw m200/c200 and point mass)
 * @param prefix model path prefix for messages (default "lens")
 */
export function buildLens(components: readonly ComponentInput[], ctx: LensContext = {}, prefix = "lens"): Lens {
  if (!Array.isArray(components)) {
    throw new InputError(`${prefix}: expected an array of components, got ${typeof components}`);
  }
  return new Lens(components.map((c, i) => buildMassProfile(c, `${prefix}[${i}]`, ctx)));
}

/** Build one mass component; `path` is its model path (e.g. "lens[1]") for messages. */
export function buildMassProfile(c: ComponentInput, path: string, ctx: LensContext = {}): MassProfile {
  if (c === null || typeof c !== "object" || typeof c.type !== "string") {
    throw new InputError(`${path}: expected an object with a "type" (one of ${LENS_TYPES.join(", ")})`);
  }
  const centre = () => ({ xArcsec: readNumber(c, path, "x", FINITE), yArcsec: readNumber(c, path, "y", FINITE) });
  switch (c.type) {
    case "sie":
      return new Sie({
        thetaEArcsec: readNumber(c, path, "theta_E", POSITIVE),
        q: readNumber(c, path, "q", AXIS_RATIO),
        paDeg: readNumber(c, path, "pa", FINITE),
        ...centre(),
        coreArcsec: readNumber(c, path, "core", { min: 0, defaultValue: 0 }),
      });
    case "epl":
      return new Epl({
        thetaEArcsec: readNumber(c, path, "theta_E", POSITIVE),
        slope: readNumber(c, path, "slope", {
          min: EPL_SLOPE_MIN,
          minInclusive: false,
          max: EPL_SLOPE_MAX,
          maxInclusive: false,
          hint: "the power-law series covers 1.2 < slope < 2.8 (2 = isothermal)",
        }),
        q: readNumber(c, path, "q", {
          min: EPL_MIN_Q,
          max: 1,
          hint: `the EPL series needs q ≥ ${EPL_MIN_Q}; use an sie for flatter isothermal lenses`,
        }),
        paDeg: readNumber(c, path, "pa", FINITE),
        ...centre(),
      });
    case "shear":
      return new ExternalShear({
        gamma: readNumber(c, path, "gamma", { min: 0, max: 1, maxInclusive: false }),
        paDeg: readNumber(c, path, "pa", FINITE),
        xArcsec: readNumber(c, path, "x", { defaultValue: 0 }),
        yArcsec: readNumber(c, path, "y", { defaultValue: 0 }),
      });
    case "multipole": {
      const order = readNumber(c, path, "order", FINITE);
      if (order !== 3 && order !== 4) {
        throw new InputError(`${path}.order: ${order} is not allowed; use 3 or 4`);
      }
      return new Multipole({
        order,
        strength: readNumber(c, path, "strength", FINITE),
        paDeg: readNumber(c, path, "pa", FINITE),
        ...centre(),
      });
    }
    case "nfw":
      return buildNfw(c, path, ctx, centre());
    case "point": {
      const hasTheta = c.theta_E !== undefined;
      const hasMass = c.mass !== undefined;
      if (hasTheta === hasMass) {
        throw new InputError(`${path}: give exactly one of theta_E (arcsec) or mass (M_sun, with redshifts)`);
      }
      let thetaEArcsec: number;
      if (hasTheta) {
        thetaEArcsec = readNumber(c, path, "theta_E", POSITIVE);
      } else {
        const mass = readNumber(c, path, "mass", POSITIVE);
        thetaEArcsec = pointMassThetaEArcsec(mass, distancesFor(ctx, path, "mass"));
      }
      return new PointMass({ thetaEArcsec, ...centre() });
    }
    case "pseudo_jaffe":
      return new PseudoJaffe({
        thetaEArcsec: readNumber(c, path, "theta_E", POSITIVE),
        rTruncArcsec: readNumber(c, path, "r_trunc", POSITIVE),
        ...centre(),
      });
    default:
      throw new InputError(`${path}.type: "${String(c.type)}" is not a lens type; use one of ${LENS_TYPES.join(", ")}`);
  }
}

function distancesFor(ctx: LensContext, path: string, what: string) {
  if (!ctx.redshift) {
    throw new InputError(`${path}.${what}: needs redshift { lens, source } in the model file to convert to arcsec`);
  }
  return lensDistances(ctx.redshift, ctx.cosmology ?? DEFAULT_COSMOLOGY, "redshift");
}

function buildNfw(
  c: ComponentInput,
  path: string,
  ctx: LensContext,
  centre: { xArcsec: number; yArcsec: number },
): Nfw {
  const q = readNumber(c, path, "q", {
    min: NFW_MIN_Q,
    max: 1,
    hint: `ellipticity is in the NFW potential, whose density becomes peanut-shaped below q = ${NFW_MIN_Q}`,
  });
  const paDeg = readNumber(c, path, "pa", FINITE);
  const byKappa = c.kappa_s !== undefined || c.r_s !== undefined;
  const byMass = c.m200 !== undefined || c.c200 !== undefined;
  if (byKappa === byMass) {
    throw new InputError(`${path}: give either kappa_s and r_s (arcsec), or m200 (M_sun) and c200 with redshifts`);
  }
  if (byKappa) {
    return new Nfw({
      kappaS: readNumber(c, path, "kappa_s", POSITIVE),
      rSArcsec: readNumber(c, path, "r_s", POSITIVE),
      q,
      paDeg,
      ...centre,
    });
  }
  const m200 = readNumber(c, path, "m200", POSITIVE);
  const c200 = readNumber(c, path, "c200", POSITIVE);
  const d = distancesFor(ctx, path, "m200");
  const cosmo = new FlatLambdaCDM(ctx.cosmology ?? DEFAULT_COSMOLOGY);
  const { kappaS, rSArcsec } = nfwFromM200(m200, c200, d, cosmo);
  return new Nfw({ kappaS, rSArcsec, q, paDeg, ...centre });
}
