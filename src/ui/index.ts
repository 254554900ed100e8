export { Badge, type BadgeTone } from './Badge';
export { Button, type ButtonKind, type ButtonProps } from './Button';
export { Card, type CardProps } from './Card';
export { Field, type FieldProps } from './Field';
export { Screen, type ScreenProps } from './Screen';
export { Segmented, type SegmentedProps } from './Segmented';
export { Text, type TextProps, type Tone } from './Text';
