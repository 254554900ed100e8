import { Link, usePathname } from 'expo-router';
import type { ReactNode } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { useSafeAreaInsets } from 'react-native-safe-area-context';
import { useLayoutSize } from '../../theme/layout';
import { colors, fonts, radius, space, touch } from '../../theme/tokens';
import { Text } from '../../ui';
import { SectionIcon } from './icons';
import { SECTIONS, sectionOf } from './sections';

/**
 * Navigation around every screen: a bottom bar on a phone (reachable with the thumb while the other hand is on the
 * stopcock), a side rail on a wide screen.
 */
export function AppFrame({ children, status, banner }: { children: ReactNode; status?: ReactNode; banner?: ReactNode }) {
  const size = useLayoutSize();
  const wide = size === 'wide';
  const current = sectionOf(usePathname());
  const insets = useSafeAreaInsets();

  const items = SECTIONS.map((s) => {
    const active = s.key === current;
    return (
      <Link key={s.key} href={s.href} asChild>
        <Pressable
          accessibilityRole="link"
          accessibilityLabel={s.label}
          accessibilityHint={s.hint}
          aria-current={active ? 'page' : undefined}
          testID={`nav-${s.key}`}
          // Link's asChild slot hands the style to the DOM as is on web, so it must be one flat object.
          style={StyleSheet.flatten([wide ? styles.railItem : styles.barItem, active && styles.itemActive])}
        >
          <SectionIcon name={s.key} color={active ? colors.accent : colors.inkMuted} />
          <Text variant="caption" tone={active ? 'accent' : 'muted'} style={active ? styles.labelActive : undefined}>
            {s.label}
          </Text>
        </Pressable>
      </Link>
    );
  });

  if (wide) {
    return (
      <View style={styles.wideRoot}>
        <View style={styles.rail} role="navigation" aria-label="Sections">
          <View style={styles.brand}>
            <Text variant="heading" tone="accent">
              Halfmark
            </Text>
          </View>
          {items}
          <View style={styles.railStatus}>{status}</View>
        </View>
        <View style={styles.main}>
          {banner}
          {children}
        </View>
      </View>
    );
  }
  return (
    <View style={[styles.phoneRoot, { paddingTop: insets.top }]}>
      {status ? <View style={styles.topStatus}>{status}</View> : null}
      {banner}
      <View style={styles.main}>{children}</View>
      <View
        style={[styles.bar, { paddingBottom: Math.max(insets.bottom, space.xs) }]}
        role="navigation"
        aria-label="Sections"
      >
        {items}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  wideRoot: { flex: 1, flexDirection: 'row', backgroundColor: colors.paper },
  phoneRoot: { flex: 1, backgroundColor: colors.paper },
  main: { flex: 1, minWidth: 0 },
  rail: {
    width: 112,
    borderRightWidth: 1,
    borderRightColor: colors.line,
    backgroundColor: colors.surface,
    paddingVertical: space.lg,
    paddingHorizontal: space.sm,
    gap: space.sm,
  },
  brand: { alignItems: 'center', paddingBottom: space.md },
  railItem: {
    minHeight: touch.large,
    borderRadius: radius.md,
    alignItems: 'center',
    justifyContent: 'center',
    gap: space.xxs,
    paddingVertical: space.sm,
  },
  railStatus: { marginTop: 'auto' },
  topStatus: {
    borderBottomWidth: 1,
    borderBottomColor: colors.line,
    backgroundColor: colors.surface,
    paddingHorizontal: space.lg,
    paddingVertical: space.xs,
  },
  bar: {
    flexDirection: 'row',
    borderTopWidth: 1,
    borderTopColor: colors.line,
    backgroundColor: colors.surface,
    paddingTop: space.xs,
  },
  barItem: {
    flex: 1,
    minHeight: touch.large,
    alignItems: 'center',
    justifyContent: 'center',
    gap: space.xxs,
    borderRadius: radius.md,
    marginHorizontal: space.xxs,
  },
  itemActive: { backgroundColor: colors.accentSoft },
  labelActive: { fontFamily: fonts.semibold },
});
