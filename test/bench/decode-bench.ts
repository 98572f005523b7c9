/**
 * Payload-decoding benchmark: ns per decode of a typical tow-tractor GNSS fix with the compiled
 * decoder (its byte scanner takes flat payloads like this one), side by side with the same
 * decoder's general path (UTF-8 text, JSON.parse, field lookups), the schema-library route
 * (UTF-8 text, JSON.parse, zod safeParse) and bare UTF-8 + JSON.parse, the floor of the last two.
 * Returns figures; never asserts on time.
 */
import { z } from 'zod';
import { compilePayloadDecoder } from '../../src/engine/payload-decoder.js';
import { compileJsonPayloadDecoder } from '../../src/engine/json-payload-decoder.js';
import { createDecodedMeasurement } from '../../src/engine/decoded-measurement.js';
import { nsPerCall } from './bench-timing.js';

const PAYLOAD_COUNT = 64;
const ITERATIONS = 100_000;
const PASSES = 3;
const ARRIVAL_S = 1_764_633_601;

/** Distinct payloads (the sequence number varies) so no step can reuse a previous result. */
function gnssPayloads(): Buffer[] {
  return Array.from({ length: PAYLOAD_COUNT }, (_, i) =>
    Buffer.from(`{"t":1764633600.5,"lat":51.9521,"lon":4.0512,"hacc":2.5,"seq":${17 + i}}`),
  );
}

const gnssSchema = z.object({
  t: z.number().finite(),
  lat: z.number().finite(),
  lon: z.number().finite(),
  hacc: z.number().positive().finite(),
  seq: z.number().int().nonnegative(),
});

/** Figures in ns per decode: decode.compiled_ns, decode.general_path_ns, decode.zod_ns and decode.json_parse_ns. */
export async function benchDecode(): Promise<Record<string, number>> {
  const payloads = gnssPayloads();
  const spec = { format: 'json', values: ['lat', 'lon'], time: 't', timeUnit: 's', sigma: 'hacc', sequence: 'seq' } as const;
  const decoder = compilePayloadDecoder(spec, 2);
  const generalDecoder = compileJsonPayloadDecoder(spec, 2, false);
  const out = createDecodedMeasurement(2);
  let accepted = 0;
  const compiled = (i: number): void => {
    if (decoder.decode(payloads[i % PAYLOAD_COUNT]!, ARRIVAL_S, out)) accepted += 1;
  };
  let general = 0;
  const viaGeneral = (i: number): void => {
    if (generalDecoder.decode(payloads[i % PAYLOAD_COUNT]!, ARRIVAL_S, out)) general += 1;
  };
  let valid = 0;
  const viaZod = (i: number): void => {
    const result = gnssSchema.safeParse(JSON.parse(payloads[i % PAYLOAD_COUNT]!.toString('utf8')));
    if (result.success) valid += 1;
  };
  let parsed = 0;
  const parseOnly = (i: number): void => {
    if (JSON.parse(payloads[i % PAYLOAD_COUNT]!.toString('utf8')) !== null) parsed += 1;
  };
  // Interleaved passes, keeping each route's best median, so a burst of load on the machine
  // penalizes no single route.
  let compiledNs = Infinity;
  let generalNs = Infinity;
  let zodNs = Infinity;
  let parseNs = Infinity;
  for (let pass = 0; pass < PASSES; pass++) {
    compiledNs = Math.min(compiledNs, nsPerCall(compiled, ITERATIONS));
    generalNs = Math.min(generalNs, nsPerCall(viaGeneral, ITERATIONS));
    zodNs = Math.min(zodNs, nsPerCall(viaZod, ITERATIONS));
    parseNs = Math.min(parseNs, nsPerCall(parseOnly, ITERATIONS));
  }

  // Every route must have accepted every payload, or the figures compare different work.
  if (accepted === 0 || general !== accepted || valid !== accepted || parsed !== accepted) {
    throw new Error(`decode bench: routes disagree (compiled ${accepted}, general ${general}, zod ${valid}, parse ${parsed})`);
  }
  return {
    'decode.compiled_ns': compiledNs,
    'decode.general_path_ns': generalNs,
    'decode.zod_ns': zodNs,
    'decode.json_parse_ns': parseNs,
  };
}
