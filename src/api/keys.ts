/** react-query keys, made in one place so invalidation matches what the screens read. */
export const keys = {
  me: () => ['auth', 'me'] as const,
  invitation: (token: string) => ['auth', 'invitation', token] as const,
  lab: (labId: string) => ['lab', labId] as const,
  members: (labId: string) => ['lab', labId, 'members'] as const,
  invitations: (labId: string) => ['lab', labId, 'invitations'] as const,
  audit: (labId: string) => ['lab', labId, 'audit'] as const,
  /** Runs of the desk; under the lab, so lab-wide invalidation reaches them too. */
  runs: (labId: string, q: object) => ['lab', labId, 'runs', q] as const,
  allRuns: (labId: string) => ['lab', labId, 'runs'] as const,
  /** One run's report (refetched as a followed run changes). */
  run: (runId: string) => ['run', runId] as const,
};
