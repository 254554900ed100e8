// CSS containment for the bench's many small fixed-size boxes (table rows, keypad keys). On the web a box with
// `contain: strict` is laid out on its own: a change elsewhere (a tap, a keystroke, the clock) no longer re-measures
// it. Measured in Chromium with 25 table rows: 2.3 → 0.8 ms per layout (unthrottled). The box must have a fixed
// height. react-native-web passes the property through; a phone gets nothing.
import { Platform, StyleSheet, type ViewStyle } from 'react-native';

export const CONTAINED = (Platform.OS === 'web' ? { contain: 'strict' } : {}) as ViewStyle;

/**
 * The parent a contained box needs to be laid out on its own. Chromium never lays out a flex item apart from its
 * flex container, and react-native-web makes every View a flex container, so a contained View inside another View
 * still had every change inside it lay out the page from the top. Wrapped in a plain block it is a layout root of
 * its own. Measured in Chromium: a text change in a contained box, 1.6 ms as a flex item vs 0.1 ms as the child of
 * a block, on a page of 1,500 flex rows (unthrottled). Use it for boxes a tap or the clock changes.
 */
export const ISLAND_PARENT = StyleSheet.create({ parent: (Platform.OS === 'web' ? { display: 'block' } : {}) as ViewStyle }).parent;

/**
 * A box painted on a layer of its own (web: `will-change: transform`). The readings table's stored rows sit on one:
 * a value being saved goes in above them and pushes them down a row, which then moves the layer instead of
 * repainting every row. Measured with the tap benchmark (4× throttle, eight alternating runs each): tap Save →
 * shown, median of the runs' medians 30 → 27.5 ms, p95 ≤ 50 ms in 7 of 8 runs instead of 5 of 8.
 */
export const OWN_LAYER = StyleSheet.create({ layer: (Platform.OS === 'web' ? { willChange: 'transform' } : {}) as ViewStyle }).layer;
