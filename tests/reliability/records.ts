import quamA2 from '../../shared/engine/fixtures/standardize-quam-a2.json';
import { desc, eq } from 'drizzle-orm';
import { outbox } from '../../db/schema';
import { linkIn, type AuthFixture } from '../../server/auth/test-fixture';
import { demoRun, insertDemoRun } from '../../server/demo/runs';

/**
 * One real record of each kind in a lab, made through the app's own API as that lab's manager (the demo runs, which
 * have no creating route but sync, are inserted like the demo lab's), so the fuzz suite can hand out ids that exist.
 */

// The smallest valid files of each kind by their magic bytes (PNG signature + IHDR + IDAT + IEND; %PDF- header).
export const PNG = Buffer.from(
  '89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000000000500010d0a2db40000000049454e44ae426082',
  'hex',
);
export const PDF = Buffer.from('%PDF-1.4\n1 0 obj<<>>endobj\ntrailer<<>>\n%%EOF\n');

// Eurachem/CITAC QUAM (3rd ed., 2012), example A2: standardising NaOH with KHP.
export const QUAM_A2 = quamA2;

/** Deliveries of about 5 mL in 250 s (server/api/calibrations.test.ts). */
export const DELIVERIES = [
  { massG: 4.985, durationS: 250.0, waterTempC: 21.5 },
  { massG: 4.991, durationS: 250.4, waterTempC: 21.5 },
  { massG: 4.979, durationS: 249.7, waterTempC: 21.6 },
];
/** Taps from the drain model dV/dt = q0 (1 − V/Vh), q0 = 0.05 mL/s, Vh = 100 mL (server/api/calibrations.test.ts). */
export const MARK_POINTS = [0, 5, 10, 15, 20, 25, 30, 35, 40].map((v) => ({ buretteMl: v, timeS: (-100 / 0.05) * Math.log(1 - v / 100) }));
/** 20 drops in 50 s. */
export const DROP_TAPS = Array.from({ length: 21 }, (_, i) => i * 2.5);
/** An ideal electrode at 25 °C (E = 5 − 59.159·(pH − 7) mV) in the KHP, phosphate and borax buffers of Buck et al. 2002. */
export const ELECTRODE_POINTS = [
  { buffer: 'KHP', mV: 5 - 59.159 * (4.005 - 7) },
  { buffer: 'phosphate', mV: 5 - 59.159 * (6.865 - 7) },
  { buffer: 'borax', mV: 5 - 59.159 * (9.18 - 7) },
];
/** A CSV as a meter logs it: time in seconds and pH (server/api/desk.test.ts). */
export const IMPORT_CSV = ['time_s,pH,note', ...Array.from({ length: 30 }, (_v, i) => `${i * 10},${(3 + i * 0.1).toFixed(2)},ok`)].join('\n');
export const IMPORT_SETUP = {
  sampleName: 'Imported benzoic acid (fuzz)',
  sampleVolumeMl: 50,
  sampleMassG: 0.2442,
  titrantConcentrationM: 0.1,
  rateMlPerS: 0.05,
  titrantLot: 'NaOH-IMP-1',
};

export interface LabRecords {
  labId: string;
  buretteId: string;
  settingId: string;
  dripCalibrations: { gravimetric: string; markTiming: string; dropCount: string };
  electrodeId: string;
  electrodeCalibrationId: string;
  lotId: string;
  standardisationId: string;
  invitationId: string;
  invitationToken: string;
  /** A member other than the manager, who joined by accepting an invitation. */
  memberId: string;
  /** An analysed demo run (invented data), read by the run, export and live routes. */
  runId: string;
  /** A demo run the review routes move through submit, return, approve and new revisions. */
  reviewRunId: string;
  /** The run made by importing IMPORT_CSV. */
  importedRunId: string;
  runAttachmentId: string;
  calibrationAttachmentId: string;
  auditEntryId: string;
}

let made = 0;

export async function seedLab(fx: AuthFixture, lab: { id: string }, manager: { id: string }): Promise<LabRecords> {
  const tag = `${++made}`;
  const token = (await fx.session(manager.id)).accessToken;
  async function call(method: 'post' | 'get', path: string, body?: object, status = 201) {
    let req = fx.api()[method](`/api${path}`).set('authorization', `Bearer ${token}`);
    if (body) req = req.send(body);
    const res = await req;
    if (res.status !== status) throw new Error(`seeding ${method.toUpperCase()} ${path}: ${res.status} ${JSON.stringify(res.body)}`);
    return res.body;
  }
  const L = `/labs/${lab.id}`;

  const burette = await call('post', `${L}/burettes`, { identifier: `FZ-BU-${tag}`, capacityMl: 50, class: 'A' });
  const setting = await call('post', `${L}/burettes/${burette.id}/drip-settings`, { stopcockSetting: '¼ turn', tip: 'standard' });
  const cal = (inputs: object) => call('post', `${L}/drip-settings/${setting.id}/calibrations`, inputs);
  const gravimetric = await cal({ method: 'gravimetric', inputs: { deliveries: DELIVERIES } });
  const markTiming = await cal({ method: 'mark-timing', inputs: { points: MARK_POINTS } });
  const dropCount = await cal({ method: 'drop-count', inputs: { tapTimesS: DROP_TAPS } });
  const electrode = await call('post', `${L}/electrodes`, { identifier: `FZ-GE-${tag}`, description: 'combination glass electrode' });
  const ecal = await call('post', `${L}/electrodes/${electrode.id}/calibrations`, { temperatureC: 25, points: ELECTRODE_POINTS });
  const lot = await call('post', `${L}/titrant-lots`, { identifier: `FZ-NaOH-${tag}`, nominalConcentrationM: 0.1, preparedAt: fx.now().toISOString() });
  const std = await call('post', `${L}/titrant-lots/${lot.id}/standardisations`, QUAM_A2);

  // Two invitations: one stays open (its id and token are handed out), one is accepted to make the second member.
  const invitation = await call('post', `${L}/invitations`, { email: `fuzz-open-${tag}@example.org`, role: 'viewer' });
  const invitationToken = await inviteToken(fx, invitation.email);
  const joining = await call('post', `${L}/invitations`, { email: `fuzz-member-${tag}@example.org`, role: 'analyst' });
  const joined = await fx
    .api()
    .post(`/api/auth/invitations/${await inviteToken(fx, joining.email)}/accept`)
    .send({ displayName: `Fuzz member ${tag}`, password: 'a fresh passphrase' });
  if (joined.status !== 200) throw new Error(`seeding the member: ${joined.status} ${JSON.stringify(joined.body)}`);

  const runs: string[] = [];
  for (const status of ['submitted', 'finished']) {
    const r = demoRun({ labId: lab.id, analystId: manager.id, index: Number(tag) * 2 + runs.length, createdAt: fx.now(), status, analyse: runs.length === 0 });
    await insertDemoRun(fx.database.db, r);
    runs.push(r.run.id);
  }
  await call('post', `${L}/imports/preview`, { csv: IMPORT_CSV }, 200);
  const imported = await call('post', `${L}/imports`, { csv: IMPORT_CSV, mapping: { time: 'time_s', pH: 'pH' }, setup: IMPORT_SETUP });

  const upload = async (path: string, file: Buffer, name: string, type: string) => {
    const res = await fx.api().post(`/api${path}`).set('authorization', `Bearer ${token}`).attach('file', file, { filename: name, contentType: type });
    if (res.status !== 201) throw new Error(`seeding an attachment: ${res.status} ${JSON.stringify(res.body)}`);
    return res.body.id as string;
  };
  const runAttachmentId = await upload(`/runs/${runs[0]}/attachments`, PNG, 'bench photo.png', 'image/png');
  const calibrationAttachmentId = await upload(`${L}/calibrations/${std.id}/attachments`, PDF, 'KHP certificate.pdf', 'application/pdf');
  const audit = await call('get', `${L}/audit?limit=1`, undefined, 200);

  return {
    labId: lab.id,
    buretteId: burette.id,
    settingId: setting.id,
    dripCalibrations: { gravimetric: gravimetric.id, markTiming: markTiming.id, dropCount: dropCount.id },
    electrodeId: electrode.id,
    electrodeCalibrationId: ecal.id,
    lotId: lot.id,
    standardisationId: std.id,
    invitationId: invitation.id,
    invitationToken,
    memberId: joined.body.user.id,
    runId: runs[0],
    reviewRunId: runs[1],
    importedRunId: imported.runId,
    runAttachmentId,
    calibrationAttachmentId,
    auditEntryId: audit.entries[0].id,
  };
}

/** The token in the newest invitation e-mail to the address (the API only ever sends it by e-mail). */
export async function inviteToken(fx: AuthFixture, email: string): Promise<string> {
  const rows = await fx.database.db.select({ text: outbox.textBody }).from(outbox).where(eq(outbox.toAddress, email)).orderBy(desc(outbox.createdAt));
  return linkIn(rows[0]?.text, 'invite');
}
