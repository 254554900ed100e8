// Asks before signing out while work is still waiting to reach the server (web: the browser's confirm dialog).
export function confirmLeave(waiting: number): Promise<boolean> {
  if (typeof window === 'undefined') return Promise.resolve(true);
  return Promise.resolve(
    window.confirm(
      `${waiting} change${waiting === 1 ? ' is' : 's are'} still waiting to reach the server. They stay on this device and go out after the next sign-in. Sign out anyway?`,
    ),
  );
}
