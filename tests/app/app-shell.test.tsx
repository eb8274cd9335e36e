/**
 * The signed-in frame (components/ui/app-shell.tsx) keeps the screen inside it mounted when the
 * width crosses the wide breakpoint: a resized window, a turned tablet, or a browser capturing
 * a screenshot beyond the viewport must not drop a form's unsaved input (the Scoring screen's
 * capacity and preview were lost that way in a browser test on a loaded machine).
 */
import { useState } from 'react';
import { Text } from 'react-native';
import { act, create, type ReactTestRenderer } from 'react-test-renderer';

let mockWide = true;
jest.mock('../../components/ui/layout', () => ({
  ...jest.requireActual('../../components/ui/layout'),
  useIsWide: () => mockWide,
}));
jest.mock('expo-router', () => ({
  usePathname: () => '/scoring',
  Link: ({ children }: { children: unknown }) => children,
}));

// eslint-disable-next-line import/first -- the mocks above must be in place before the frame loads
import { AppShell } from '../../components/ui/app-shell';

/** A screen with state of its own: a counter set once and shown. */
function Stateful({ onMount }: { onMount: () => void }) {
  const [value] = useState(() => {
    onMount();
    return 'typed by the user';
  });
  return <Text testID="stateful">{value}</Text>;
}

describe('AppShell', () => {
  it('keeps the screen mounted, with its state, when the width crosses the breakpoint both ways', async () => {
    const mounts = jest.fn();
    const nav = [
      { href: '/', label: 'Queue' },
      { href: '/scoring', label: 'Scoring' },
    ];
    const frame = () => (
      <AppShell nav={nav as never} accessory={null} who={{ name: 'Maud Fennick', role: 'Supervisor' }}>
        <Stateful onMount={mounts} />
      </AppShell>
    );
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(frame());
    });
    expect(mounts).toHaveBeenCalledTimes(1);
    for (const next of [false, true, false]) {
      mockWide = next;
      await act(async () => {
        r.update(frame());
      });
      expect(r.root.findAll((n) => n.props?.testID === 'stateful').length).toBeGreaterThan(0);
    }
    // Mounted once: the three width changes re-rendered it without a new instance.
    expect(mounts).toHaveBeenCalledTimes(1);
  });
});
