/**
 * Substitute ranker: which other tube type can go in a socket as it is wired, on its heater
 * supply, at the voltages the circuit really applies — and how many good ones are on the shelf.
 * Every verdict comes with its reasons.
 *
 * Pure: no IO, no clock, no randomness. The only public entry of this engine.
 */
export type {
  AdapterConnection,
  Candidate,
  CharacteristicComparison,
  CharacteristicTolerances,
  CircuitOperatingValues,
  Excluded,
  HeaterFit,
  HeaterFitKind,
  HeaterSupply,
  PinFit,
  PinFitKind,
  PinJumper,
  PinMove,
  PinRemoval,
  RatingCheck,
  SectionCharacteristics,
  SectionMappingEntry,
  SmallSignalValues,
  SocketDescription,
  SocketFit,
  SocketMiss,
  SocketsForTypeOptions,
  SocketsForTypeResult,
  StockCount,
  SubstituteRanking,
  SubstituteRelation,
} from "./types.ts";
export { rankSubstitutes, DEFAULT_DERATING_FACTOR } from "./rank-substitutes.ts";
export { socketsForType, naturalHeaterSupply } from "./sockets-for-type.ts";
export { commonCathodeGain, DEFAULT_TOLERANCES, ASSUMED_PLATE_LOAD_PER_PLATE_RESISTANCE } from "./characteristics.ts";
export { HEATER_RATING_MATCH_FRACTION, WARM_UP_MATCH_SECONDS } from "./heater-fit.ts";
export { MAX_SECTION_MAPPINGS } from "./pin-fit.ts";
export { GLOW_VOLTS_TOLERANCE } from "./glow-fit.ts";
export { MAX_VARIANT_CHAIN_STEPS } from "./identity.ts";
