// Server data of the Calibrate section. One overview query per lab (what the bench's run setup reads too);
// every change invalidates it, so the in-force marks are always the server's.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CalibrationOverview,
  CreateBuretteBody,
  CreateDripCalibrationBody,
  CreateDripSettingBody,
  CreateElectrodeBody,
  CreateElectrodeCalibrationBody,
  CreateStandardisationBody,
  CreateTitrantLotBody,
  DripCalibration,
  ElectrodeCalibrationRecord,
  Standardisation,
  UpdateRecordBody,
} from '../../../shared/schemas/calibration-api';
import type { Attachment } from '../../../shared/schemas/desk';
import { api } from '../../api/client';
import { keys } from '../../api/keys';
import { activeMembership, useSession } from '../../state/session';

/** Keys of this section, under the lab's key so invalidating the lab refreshes them too. */
export const calibrationKeys = {
  overview: (labId: string) => [...keys.lab(labId), 'calibrations'] as const,
  files: (labId: string, calibrationId: string) => [...keys.lab(labId), 'calibration-files', calibrationId] as const,
};

/** Files attached to one calibration record (e.g. the certificate of the primary standard of a standardisation). */
export function useCalibrationFiles(labId: string | null, calibrationId: string | null) {
  return useQuery({
    queryKey: calibrationKeys.files(labId ?? 'none', calibrationId ?? 'none'),
    queryFn: () => api<Attachment[]>(`/labs/${labId}/calibrations/${calibrationId}/attachments`),
    enabled: Boolean(labId && calibrationId),
  });
}

export function useActiveLab() {
  const m = useSession(activeMembership);
  return { labId: m?.labId ?? null, role: m?.role ?? null, isManager: m?.role === 'manager', isDemo: m?.isDemo ?? false };
}

export function useCalibrations(labId: string | null) {
  return useQuery({
    queryKey: calibrationKeys.overview(labId ?? 'none'),
    queryFn: () => api<CalibrationOverview>(`/labs/${labId}/calibrations`),
    enabled: Boolean(labId),
    // Kept for a day in memory so a phone that lost the network still shows what is in force.
    gcTime: 24 * 3_600_000,
  });
}

function useLabMutation<B, R>(labId: string | null, path: (b: B) => string, method: 'POST' | 'PATCH' | 'PUT', body: (b: B) => unknown) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (b: B) => api<R>(`/labs/${labId}${path(b)}`, { method, body: body(b) }),
    onSuccess: () => qc.invalidateQueries({ queryKey: calibrationKeys.overview(labId ?? 'none') }),
  });
}

const whole = <B,>(b: B) => b;

export const useCreateBurette = (labId: string | null) =>
  useLabMutation<CreateBuretteBody, { id: string }>(labId, () => '/burettes', 'POST', whole);

export const useCreateDripSetting = (labId: string | null) =>
  useLabMutation<{ buretteId: string; body: CreateDripSettingBody }, { id: string }>(
    labId,
    (b) => `/burettes/${b.buretteId}/drip-settings`,
    'POST',
    (b) => b.body,
  );

export const useCreateDripCalibration = (labId: string | null) =>
  useLabMutation<{ settingId: string; body: CreateDripCalibrationBody }, DripCalibration>(
    labId,
    (b) => `/drip-settings/${b.settingId}/calibrations`,
    'POST',
    (b) => b.body,
  );

export const useCreateElectrode = (labId: string | null) =>
  useLabMutation<CreateElectrodeBody, { id: string }>(labId, () => '/electrodes', 'POST', whole);

export const useCreateElectrodeCalibration = (labId: string | null) =>
  useLabMutation<{ electrodeId: string; body: CreateElectrodeCalibrationBody }, ElectrodeCalibrationRecord>(
    labId,
    (b) => `/electrodes/${b.electrodeId}/calibrations`,
    'POST',
    (b) => b.body,
  );

export const useCreateLot = (labId: string | null) =>
  useLabMutation<CreateTitrantLotBody, { id: string }>(labId, () => '/titrant-lots', 'POST', whole);

export const useCreateStandardisation = (labId: string | null) =>
  useLabMutation<{ lotId: string; body: CreateStandardisationBody }, Standardisation>(
    labId,
    (b) => `/titrant-lots/${b.lotId}/standardisations`,
    'POST',
    (b) => b.body,
  );

const RECORD_PATHS = { drip: 'drip-calibrations', electrode: 'electrode-calibrations', standardisation: 'standardisations' } as const;

export const useUpdateRecord = (labId: string | null) =>
  useLabMutation<{ kind: keyof typeof RECORD_PATHS; id: string; body: UpdateRecordBody }, unknown>(
    labId,
    (b) => `/${RECORD_PATHS[b.kind]}/${b.id}`,
    'PATCH',
    (b) => b.body,
  );
