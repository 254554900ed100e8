import type { SectionIconName } from './iconShapes';

/** The four sections of Halfmark, in navigation order. */
export const SECTIONS: { key: SectionIconName; href: string; label: string; hint: string }[] = [
  { key: 'bench', href: '/bench', label: 'Bench', hint: 'Plan, time and record a titration' },
  { key: 'logbook', href: '/logbook', label: 'Logbook', hint: 'Runs of the lab, reports and comparisons' },
  { key: 'calibrate', href: '/calibrate', label: 'Calibrate', hint: 'Drip rates, titrant lots, electrodes' },
  { key: 'lab', href: '/lab', label: 'Lab', hint: 'Members, invitations and the audit trail' },
];

export function sectionOf(pathname: string): SectionIconName | undefined {
  return SECTIONS.find((s) => pathname === s.href || pathname.startsWith(`${s.href}/`))?.key;
}
