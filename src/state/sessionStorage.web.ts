import type { StateStorage } from 'zustand/middleware';

/** Browser: localStorage, read lazily (static rendering runs without it). */
const ls = () => (typeof localStorage === 'undefined' ? undefined : localStorage);
export const sessionStorage: StateStorage = {
  getItem: (k) => ls()?.getItem(k) ?? null,
  setItem: (k, v) => ls()?.setItem(k, v),
  removeItem: (k) => ls()?.removeItem(k),
};
