import { Link, usePathname, type Href } from 'expo-router';
import type { ReactNode } from 'react';
import { Pressable, ScrollView, View } from 'react-native';
import { OFFICE } from '../../shared/letters';
import { colours, MAX_CONTENT_WIDTH, space } from '../theme';
import { useIsWide } from './layout';
import { PlumbMark } from './plumb-mark';
import { Txt } from './text';

/** One navigation entry. */
export interface NavItem {
  /** A screen of the app (checked against app/ when typed routes are generated). */
  href: Extract<Href, string>;
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
 * The app's ink top bar with the mark, as the banner landmark (react-native-web renders
 * role="banner" as <header>); what follows the mark is the caller's. The signed-in frame and
 * the taxpayer's reply page both stand under it.
 */
export function TopBar({ children }: { children: ReactNode }) {
  return (
    <View
      role="banner"
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
      {children}
    </View>
  );
}

/**
 * The frame around every signed-in screen: a top bar with the mark; on wide screens a left
 * rail of destinations, on phones a scrolling row of them under the bar.
 *
 * Landmarks (WCAG 1.3.1, 2.4.1): the top bar is the banner (react-native-web renders
 * role="banner" as <header>), the destinations a navigation (<nav>) and the screen the main
 * region (<main>), so screen-reader users can jump between them and no content sits
 * outside one. The main region scrolls and takes the focus itself, so the keyboard can
 * scroll a screen that has no control in it (axe: scrollable-region-focusable).
 */
export function AppShell({ nav, accessory, children }: AppShellProps) {
  const wide = useIsWide();
  const pathname = usePathname();
  const isActive = (href: string) => (href === '/' ? pathname === '/' : pathname.startsWith(href));
  const navLinks = nav.map((n) => (
    <Link key={n.href} href={n.href} asChild>
      <Pressable
        role="link"
        aria-current={isActive(n.href) ? 'page' : undefined}
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
      <TopBar>
        {/* The product's name, not a heading: each screen's own title is its first heading. */}
        <Txt variant="lead" bold tone="white">
          Plumbline
        </Txt>
        {wide && (
          <Txt variant="small" style={{ color: colours.onInkSoft, marginLeft: space.xs }} numberOfLines={1}>
            {OFFICE.name}
          </Txt>
        )}
        <View style={{ flex: 1 }} />
        {accessory}
      </TopBar>
      {wide ? (
        <View style={{ flex: 1, flexDirection: 'row' }}>
          <View role="navigation" aria-label="Screens" style={{ width: 210, borderRightWidth: 1, borderRightColor: colours.line, padding: space.md, gap: 2 }}>
            {navLinks}
          </View>
          <ScrollView role="main" tabIndex={0} style={{ flex: 1 }} contentContainerStyle={{ padding: space.xl }}>
            <View style={{ width: '100%', maxWidth: MAX_CONTENT_WIDTH }}>{children}</View>
          </ScrollView>
        </View>
      ) : (
        <>
          <View
            role="navigation"
            aria-label="Screens"
            style={{ flexGrow: 0, borderBottomWidth: 1, borderBottomColor: colours.line, backgroundColor: colours.surface }}
          >
            <ScrollView
              horizontal
              showsHorizontalScrollIndicator={false}
              contentContainerStyle={{ paddingHorizontal: space.sm, paddingVertical: space.xs, gap: space.xs }}
            >
              {navLinks}
            </ScrollView>
          </View>
          <ScrollView role="main" tabIndex={0} style={{ flex: 1 }} contentContainerStyle={{ padding: space.lg }}>
            {children}
          </ScrollView>
        </>
      )}
    </View>
  );
}
