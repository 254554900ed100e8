// The worker's messages (analyserCore.ts): what crosses to and from the worker must give the live screen exactly
// what analysing on the main thread gives, with the long columns transferred rather than copied.
import { describe, expect, it } from 'vitest';
import { simulateCurve } from '../../../shared/engine/simulate';
import type { RunDocumentInput } from '../../../shared/schemas/run-document';
import { liveOf, packReply, packRequest, unpackReply, unpackRequest } from './analyserCore';
import { analyse } from './liveAnalysis';

// A curve from the engine's own model (invented sample, as in the demo): 0.1 M weak acid, pKa 4.76, 25 mL, 0.1 M NaOH
// on a 0.01 mL/s drip. Only the transport is under test here; the engine's science has its own sourced tests.
const curve = simulateCurve({ sample: { volumeMl: 25, concentrationM: 0.1 }, acid: { pKa: [4.76] }, titrant: { concentrationM: 0.1 }, delivery: { rateMlPerS: 0.01 }, stepMl: 0.05, maxVolumeMl: 40, timesS: undefined });
const doc: RunDocumentInput = {
  label: 'demo',
  sample: { volumeMl: 25 },
  titrant: { concentrationM: 0.1 },
  delivery: { rateMlPerS: 0.01, checkpoints: [{ timeS: 0, buretteMl: 0 }] },
  readings: curve.points.map((p) => ({ timeS: p.volumeMl / 0.01, pH: Math.round(p.pH * 100) / 100 })),
};

/** What a postMessage with a transfer list does to the message and the sender's buffers. */
const across = <T>(message: T, transfer: ArrayBuffer[]) => structuredClone(message, { transfer });

describe('live analysis messages', () => {
  it('a request carries every reading, and its columns are moved, not copied', () => {
    const { message, transfer } = packRequest(7, doc);
    expect(transfer).toHaveLength(2);
    const received = across(message, transfer);
    expect(message.timeS.byteLength).toBe(0); // the sender's copy is gone: it was transferred
    expect(unpackRequest(received)).toEqual(doc);
  });

  it('the reply gives the live screen what the main-thread analysis gives', () => {
    const full = analyse(doc);
    expect(full?.error).toBeNull();
    const { message, transfer } = packReply(3, liveOf(full), 12);
    const live = unpackReply(across(message, transfer));
    expect(live).toEqual(liveOf(full));
    expect(live?.result?.equivalencePoints.length).toBe(1);
    expect(live?.result?.derivative.length).toBe(full!.result!.derivative.length);
    expect(message.dV.byteLength).toBe(0);
  });

  it('an engine refusal keeps its reason, and no document stays no analysis', () => {
    const refused = analyse({ ...doc, readings: [] });
    expect(refused?.result).toBeNull();
    expect(unpackReply(across(packReply(1, liveOf(refused), 0).message, []))).toEqual({ result: null, error: refused!.error });
    expect(unpackReply(packReply(2, null, 0).message)).toBeNull();
  });
});
