/** Public surface of src/cosmo: flat ΛCDM distances and lensing masses. */
export { DEFAULT_COSMOLOGY, FlatLambdaCDM, type CosmologyParams } from "./distances.js";
export {
  einsteinMassMsun,
  lensDistances,
  nfwFromM200,
  pointMassDeflectionRad,
  pointMassThetaEArcsec,
  sisThetaEArcsec,
  sisVelocityDispersionKms,
  type LensDistances,
  type NfwLensingParams,
  type RedshiftPair,
} from "./lensing.js";
export { gaussLegendre, integrate, type GaussRule } from "./quadrature.js";
