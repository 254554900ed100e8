import type { ReactNode } from 'react';
import { Platform, ScrollView, StyleSheet, View } from 'react-native';
import { useLayoutSize } from '../theme/layout';
import { colors, space } from '../theme/tokens';
import { Text } from './Text';

export interface ScreenProps {
  title: string;
  subtitle?: string;
  /** Buttons at the right of the title. */
  actions?: ReactNode;
  children?: ReactNode;
  /** Screens with their own scrolling (tables, live charts) opt out. */
  scroll?: boolean;
  /** `form`: a narrow centred column (sign-in and other short forms), instead of the page's wide one. */
  width?: 'page' | 'form';
  testID?: string;
}

/** The frame of every section: a title row and a readable column that widens on a desk screen. */
export function Screen({ title, subtitle, actions, children, scroll = true, width = 'page', testID }: ScreenProps) {
  const size = useLayoutSize();
  const pad = size === 'phone' ? space.lg : space.xxl;
  const body = (
    <View style={[styles.column, width === 'form' && styles.form, { padding: pad }]}>
      <View style={styles.head}>
        <View style={styles.headText}>
          <Text variant="title" accessibilityRole="header" aria-level={1}>
            {title}
          </Text>
          {subtitle ? (
            <Text variant="body" tone="muted">
              {subtitle}
            </Text>
          ) : null}
        </View>
        {actions ? <View style={styles.actions}>{actions}</View> : null}
      </View>
      {children}
    </View>
  );
  return (
    <View style={styles.page} testID={testID}>
      {scroll ? <ScrollView style={styles.scroller} contentContainerStyle={styles.scroll}>{body}</ScrollView> : body}
    </View>
  );
}

const styles = StyleSheet.create({
  page: { flex: 1, backgroundColor: colors.paper },
  // react-native-web gives a scroll view `translateZ(0)`, a compositing layer of its own; in Chromium everything
  // drawn over it inside the page then became a layer too (16 layers on the bench screen instead of 5), and each
  // frame re-assigned them. The browser still composites the scrolling where it pays (high-density screens).
  scroller: Platform.OS === 'web' ? { transform: 'none' } : {},
  scroll: { flexGrow: 1 },
  column: { width: '100%', maxWidth: 1200, alignSelf: 'center', gap: space.lg },
  // A line of about 60 characters: a form wider than that is harder to scan on a desk screen.
  form: { maxWidth: 560 },
  head: { flexDirection: 'row', alignItems: 'flex-start', justifyContent: 'space-between', gap: space.md, flexWrap: 'wrap' },
  headText: { flexShrink: 1, gap: space.xs },
  actions: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
});
