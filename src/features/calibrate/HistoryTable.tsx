// A plain table for the wide screen: managers read every record with its status, newest first.
import type { ReactElement } from 'react';
import { ScrollView, StyleSheet, View } from 'react-native';
import { colors, space } from '../../theme/tokens';
import { Text } from '../../ui';

export interface Column<T> {
  title: string;
  width: number;
  cell(row: T): string | ReactElement;
}

export function HistoryTable<T extends { id: string }>({ rows, columns, testID, empty }: { rows: T[]; columns: Column<T>[]; testID?: string; empty: string }) {
  if (rows.length === 0) return <Text tone="muted">{empty}</Text>;
  return (
    <ScrollView horizontal testID={testID} role="table">
      <View>
        <View style={[styles.row, styles.head]} role="row">
          {columns.map((c) => (
            <View key={c.title} style={[styles.cell, { width: c.width }]} role="columnheader">
              <Text variant="caption" tone="muted">
                {c.title}
              </Text>
            </View>
          ))}
        </View>
        {rows.map((r) => (
          <View key={r.id} style={styles.row} role="row">
            {columns.map((c) => {
              const v = c.cell(r);
              return (
                <View key={c.title} style={[styles.cell, { width: c.width }]} role="cell">
                  {typeof v === 'string' ? (
                    <Text variant="caption" numeric>
                      {v}
                    </Text>
                  ) : (
                    v
                  )}
                </View>
              );
            })}
          </View>
        ))}
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', borderBottomWidth: 1, borderBottomColor: colors.line },
  head: { borderBottomColor: colors.lineStrong },
  cell: { paddingVertical: space.sm, paddingRight: space.md, justifyContent: 'center' },
});
