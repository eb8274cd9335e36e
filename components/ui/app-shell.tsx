import { Link, usePathname } from 'expo-router';
import type { ReactNode } from 'react';
import { Pressable, ScrollView, View } from 'react-native';
import { colours, MAX_CONTENT_WIDTH, space } from '../theme';
import { useIsWide } from './layout';
import { PlumbMark } from './plumb-mark';
import { Txt } from './text';

/** One navigation entry. */
export interface NavItem {
  href: string;
  label: string;
}

/** Props for {@link AppShell}. */
export interface AppShellProps {
  nav: NavItem[];
  /** Shown at the right of the top bar (e.g. who is signed in). */
  accessory?: ReactNode;
  children: ReactNode;
}

/**
 * The frame around every signed-in screen: a top bar with the mark; on wide screens a left
 * rail of destinations, on phones a scrolling row of them under the bar.
 */
export function AppShell({ nav, accessory, children }: AppShellProps) {
  const wide = useIsWide();
  const pathname = usePathname();
  const isActive = (href: string) => (href === '/' ? pathname === '/' : pathname.startsWith(href));
  const navLinks = nav.map((n) => (
    <Link key={n.href} href={n.href as never} asChild>
      <Pressable
        accessibilityRole="link"
        style={{
          paddingVertical: space.sm,
          paddingHorizontal: space.md,
          borderRadius: 6,
          backgroundColor: isActive(n.href) ? colours.brassSoft : 'transparent',
          borderLeftWidth: wide ? 3 : 0,
          borderLeftColor: isActive(n.href) ? colours.brass : 'transparent',
        }}
      >
        <Txt bold={isActive(n.href)} tone={isActive(n.href) ? 'ink' : 'soft'}>
          {n.label}
        </Txt>
      </Pressable>
    </Link>
  ));

  return (
    <View style={{ flex: 1, backgroundColor: colours.paper }}>
      <View
        style={{
          backgroundColor: colours.ink,
          paddingHorizontal: space.lg,
          paddingVertical: space.md,
          flexDirection: 'row',
          alignItems: 'center',
          gap: space.sm,
        }}
      >
        <PlumbMark />
        <Txt variant="lead" bold tone="white" accessibilityRole="header">
          Plumbline
        </Txt>
        <Txt variant="small" style={{ color: '#B9C8C6', marginLeft: space.xs }} numberOfLines={1}>
          {wide ? 'Aldermere Revenue Office' : ''}
        </Txt>
        <View style={{ flex: 1 }} />
        {accessory}
      </View>
      {wide ? (
        <View style={{ flex: 1, flexDirection: 'row' }}>
          <View style={{ width: 210, borderRightWidth: 1, borderRightColor: colours.line, padding: space.md, gap: 2 }}>
            {navLinks}
          </View>
          <ScrollView style={{ flex: 1 }} contentContainerStyle={{ padding: space.xl }}>
            <View style={{ width: '100%', maxWidth: MAX_CONTENT_WIDTH }}>{children}</View>
          </ScrollView>
        </View>
      ) : (
        <>
          <ScrollView
            horizontal
            showsHorizontalScrollIndicator={false}
            style={{ flexGrow: 0, borderBottomWidth: 1, borderBottomColor: colours.line, backgroundColor: colours.surface }}
            contentContainerStyle={{ paddingHorizontal: space.sm, paddingVertical: space.xs, gap: space.xs }}
          >
            {navLinks}
          </ScrollView>
          <ScrollView style={{ flex: 1 }} contentContainerStyle={{ padding: space.lg }}>
            {children}
          </ScrollView>
        </>
      )}
    </View>
  );
}
