import { create } from 'zustand';
import { createJSONStorage, persist } from 'zustand/middleware';
import type { LabMembership, SessionResponse, SessionUser } from '../../shared/schemas/auth';
import { sessionStorage } from './sessionStorage';

/**
 * Who is signed in, their labs and the active lab. The access token lives in memory only (a reload or a new tab
 * gets a fresh one through the refresh cookie); the rest is persisted so the phone keeps working offline with the
 * last session. An expired token never blocks recording: recording is local, and sync re-authenticates when back
 * online.
 */
export interface SessionState {
  user: SessionUser | null;
  labs: LabMembership[];
  activeLabId: string | null;
  accessToken: string | null;
  accessTokenExpiresAt: string | null;
  /** The server said the sign-in has ended (refresh refused); the app asks to sign in again when online. */
  signedOutByServer: boolean;
  /** Local changes not yet on the server (set by src/sync; not persisted). Signing out warns while above zero. */
  unsynced: number;
  setUnsynced(n: number): void;
  setSession(s: SessionResponse): void;
  setMe(me: { user: SessionUser; labs: LabMembership[] }): void;
  setActiveLab(labId: string): void;
  clearToken(): void;
  signOutLocally(byServer?: boolean): void;
}

const pickLab = (labs: LabMembership[], current: string | null) =>
  labs.some((l) => l.labId === current) ? current : (labs[0]?.labId ?? null);

export const useSession = create<SessionState>()(
  persist(
    (set) => ({
      user: null,
      labs: [],
      activeLabId: null,
      accessToken: null,
      accessTokenExpiresAt: null,
      signedOutByServer: false,
      unsynced: 0,
      setUnsynced: (n) => set({ unsynced: n }),
      setSession: (s) =>
        set((st) => ({
          user: s.user,
          labs: s.labs,
          activeLabId: pickLab(s.labs, st.user?.id === s.user.id ? st.activeLabId : null),
          accessToken: s.accessToken,
          accessTokenExpiresAt: s.accessTokenExpiresAt,
          signedOutByServer: false,
        })),
      setMe: (me) => set((st) => ({ user: me.user, labs: me.labs, activeLabId: pickLab(me.labs, st.activeLabId) })),
      setActiveLab: (labId) => set({ activeLabId: labId }),
      clearToken: () => set({ accessToken: null, accessTokenExpiresAt: null }),
      signOutLocally: (byServer = false) =>
        set(
          byServer
            ? { accessToken: null, accessTokenExpiresAt: null, signedOutByServer: true }
            : { user: null, labs: [], activeLabId: null, accessToken: null, accessTokenExpiresAt: null, signedOutByServer: false },
        ),
    }),
    {
      name: 'halfmark.session',
      version: 1,
      storage: createJSONStorage(() => sessionStorage),
      partialize: (s) => ({ user: s.user, labs: s.labs, activeLabId: s.activeLabId, signedOutByServer: s.signedOutByServer }),
    },
  ),
);

export const activeMembership = (s: SessionState): LabMembership | undefined => s.labs.find((l) => l.labId === s.activeLabId);
