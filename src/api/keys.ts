/** react-query keys, made in one place so invalidation matches what the screens read. */
export const keys = {
  me: () => ['auth', 'me'] as const,
  invitation: (token: string) => ['auth', 'invitation', token] as const,
  lab: (labId: string) => ['lab', labId] as const,
  members: (labId: string) => ['lab', labId, 'members'] as const,
  invitations: (labId: string) => ['lab', labId, 'invitations'] as const,
  audit: (labId: string) => ['lab', labId, 'audit'] as const,
};
