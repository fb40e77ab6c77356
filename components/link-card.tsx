import type { Href } from 'expo-router';
import { Text } from 'react-native';
import { Button } from './button';
import { Card } from './card';
import { colors, text } from './theme';

export interface LinkCardProps {
  title: string;
  body: string;
  /** Button label and destination. */
  action: string;
  href: Href;
  primary?: boolean;
}

/** A "what you can do next" card: title, one or two sentences, one button onward. */
export function LinkCard({ title, body, action, href, primary }: LinkCardProps) {
  return (
    <Card title={title} style={{ flexGrow: 1, flexBasis: 280, maxWidth: 560 }}>
      <Text style={[text.body, { color: colors.slate }]}>{body}</Text>
      <Button label={action} href={href} variant={primary ? 'primary' : 'secondary'} />
    </Card>
  );
}
