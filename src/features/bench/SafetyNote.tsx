import { Card, Text } from '../../ui';

/** The usual cautions for the bench; the lab's own rules and the safety data sheet come first. */
export function SafetyNote({ compact }: { compact?: boolean }) {
  return (
    <Card tone="warn" title="Before you start" testID="safety-note">
      <Text variant={compact ? 'caption' : 'body'}>
        Wear eye protection. Sodium hydroxide is corrosive at stock strength and dissolving it releases a lot of heat;
        keep it in polyethylene. Add acid to water, never water to acid. Fill the burette below eye level, with a
        funnel, and take the funnel out before you start the drip.
      </Text>
      <Text variant="caption" tone="muted">
        These are general cautions only. Follow your lab’s risk assessment, local rules and the safety data sheet of
        each reagent.
      </Text>
    </Card>
  );
}
