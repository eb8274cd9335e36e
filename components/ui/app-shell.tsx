import { Link, usePathname, type Href } from 'expo-router';
import { useEffect, useRef, useState, type ReactNode } from 'react';
import { Pressable, ScrollView, View, type NativeScrollEvent, type NativeSyntheticEvent } from 'react-native';
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
  /** Other paths that belong to this section (a case page belongs to the queue), as prefixes. */
  also?: readonly string[];
}

/** True when `pathname` is `href` itself or a page under it (`/batches/42` under `/batches`). */
function under(pathname: string, href: string): boolean {
  return href === '/' ? pathname === '/' : pathname === href || pathname.startsWith(href.endsWith('/') ? href : `${href}/`);
}

/** The one entry the current page belongs to: its own, or the section that holds it. */
export function activeHref(nav: readonly NavItem[], pathname: string): string | undefined {
  return (nav.find((n) => under(pathname, n.href)) ?? nav.find((n) => n.also?.some((a) => under(pathname, a))))?.href;
}

/** Props for {@link AppShell}. */
export interface AppShellProps {
  nav: NavItem[];
  /** Shown at the right of the top bar (e.g. who is signed in). */
  accessory?: ReactNode;
  /** Who is signed in: on a phone the frame shows it in the top bar (wide screens: the accessory does). */
  who?: { name: string; role: string };
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
 * The phone's row of destinations: scrolls sideways, brings the current section into view,
 * and shows a cue at an edge while more destinations lie beyond it (the row is cut off on a
 * 390-wide phone, and a cut-off row with no cue reads as the whole menu).
 */
function PhoneNavRow({ links, activeIndex }: { links: ReactNode[]; activeIndex: number }) {
  const scroller = useRef<ScrollView>(null);
  const [box, setBox] = useState({ x: 0, view: 0, content: 0 });
  // Where each entry starts in the row: layout events come only on mount and resize, so all are
  // kept, and the current one is looked up when the page (and so the current entry) changes.
  const [xs, setXs] = useState<number[]>([]);
  const activeX = activeIndex >= 0 ? (xs[activeIndex] ?? null) : null;
  const more = box.content - box.view - box.x > 4;
  const before = box.x > 4;
  // Once the row's width, its content's width and the entry's place are all known (they arrive
  // in any order), scroll so the current entry shows.
  useEffect(() => {
    if (activeX !== null && box.view > 0 && box.content > box.view && activeX > box.view * 0.6)
      scroller.current?.scrollTo({ x: Math.min(box.content - box.view, Math.max(0, activeX - 24)), animated: false });
  }, [activeX, box.view, box.content]);
  const onScroll = (e: NativeSyntheticEvent<NativeScrollEvent>) => {
    const x = e.nativeEvent.contentOffset.x;
    setBox((b) => ({ ...b, x }));
  };
  // A visual cue only (the row itself scrolls by swipe, wheel or Tab): hidden from assistive
  // technology, and it lets touches through to the row under it.
  const cue = (side: 'left' | 'right') => (
    <View
      aria-hidden
      pointerEvents="none"
      testID={`nav-more-${side}`}
      style={{
        position: 'absolute',
        top: 0,
        bottom: 0,
        [side]: 0,
        width: 32,
        alignItems: 'center',
        justifyContent: 'center',
        backgroundColor: colours.surface,
        borderColor: colours.line,
        [side === 'right' ? 'borderLeftWidth' : 'borderRightWidth']: 1,
        shadowColor: colours.ink,
        shadowOpacity: 0.2,
        shadowRadius: 8,
        shadowOffset: { width: side === 'right' ? -4 : 4, height: 0 },
      }}
    >
      <Txt variant="lead" bold tone="brass">
        {side === 'right' ? '›' : '‹'}
      </Txt>
    </View>
  );
  return (
    <View style={{ position: 'relative' }}>
      <ScrollView
        ref={scroller}
        horizontal
        showsHorizontalScrollIndicator={false}
        onScroll={onScroll}
        scrollEventThrottle={32}
        onLayout={(e) => {
          const view = e.nativeEvent.layout.width;
          setBox((b) => ({ ...b, view }));
        }}
        onContentSizeChange={(content) => setBox((b) => ({ ...b, content }))}
        contentContainerStyle={{ paddingHorizontal: space.sm, paddingVertical: space.xs, gap: space.xs }}
      >
        {links.map((l, i) => (
          <View
            key={i}
            onLayout={(e) => {
              const x = e.nativeEvent.layout.x;
              setXs((old) => {
                const next = [...old];
                next[i] = x;
                return next;
              });
            }}
          >
            {l}
          </View>
        ))}
      </ScrollView>
      {before && cue('left')}
      {more && cue('right')}
    </View>
  );
}

/**
 * The frame around every signed-in screen: a top bar with the mark; on wide screens a left
 * rail of destinations, on phones a scrolling row of them under the bar, with a cue while
 * more lie beyond its edge, and the signed-in person's name and role in the bar. The
 * destination the page belongs to is marked, on nested pages too (a case page marks the
 * queue: {@link NavItem.also}).
 *
 * Landmarks (WCAG 1.3.1, 2.4.1): the top bar is the banner (react-native-web renders
 * role="banner" as <header>), the destinations a navigation (<nav>) and the screen the main
 * region (<main>), so screen-reader users can jump between them and no content sits
 * outside one. The main region scrolls and takes the focus itself, so the keyboard can
 * scroll a screen that has no control in it (axe: scrollable-region-focusable).
 */
export function AppShell({ nav, accessory, who, children }: AppShellProps) {
  const wide = useIsWide();
  const pathname = usePathname();
  const current = activeHref(nav, pathname);
  const isActive = (href: string) => href === current;
  const navLinks = nav.map((n) => (
    <Link key={n.href} href={n.href} asChild>
      <Pressable
        role="link"
        testID={`nav-${n.href.replace(/^\//, '') || 'home'}`}
        aria-current={isActive(n.href) ? 'page' : undefined}
        style={{
          paddingVertical: space.sm,
          paddingHorizontal: space.md,
          borderRadius: 6,
          backgroundColor: isActive(n.href) ? colours.brassSoft : 'transparent',
          borderLeftWidth: wide ? 3 : 0,
          borderLeftColor: isActive(n.href) ? colours.brass : 'transparent',
          // On the phone's row the current one is underlined as well as filled.
          borderBottomWidth: wide ? 0 : 3,
          borderBottomColor: isActive(n.href) ? colours.brass : 'transparent',
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
        {!wide && who && (
          <View style={{ alignItems: 'flex-end', flexShrink: 1, minWidth: 0 }} testID="signed-in-who">
            <Txt variant="small" bold tone="white" numberOfLines={1} testID="signed-in-name">
              {who.name}
            </Txt>
            <Txt variant="caption" style={{ color: colours.onInkSoft }} numberOfLines={1} testID="signed-in-role">
              {who.role}
            </Txt>
          </View>
        )}
        {accessory}
      </TopBar>
      {/* One tree at every width, only its styles change: a width that crosses the breakpoint
          (a window resized, a tablet turned, a browser taking a screenshot beyond the viewport)
          must not remount the screen, which would drop its unsaved input and its scroll. */}
      <View style={{ flex: 1, flexDirection: wide ? 'row' : 'column' }}>
        <View
          role="navigation"
          aria-label="Screens"
          style={
            wide
              ? { width: 210, borderRightWidth: 1, borderRightColor: colours.line, padding: space.md, gap: 2 }
              : { flexGrow: 0, borderBottomWidth: 1, borderBottomColor: colours.line, backgroundColor: colours.surface }
          }
        >
          {wide ? navLinks : <PhoneNavRow links={navLinks} activeIndex={nav.findIndex((n) => n.href === current)} />}
        </View>
        <ScrollView role="main" tabIndex={0} style={{ flex: 1 }} contentContainerStyle={{ padding: wide ? space.xl : space.lg }}>
          <View style={{ width: '100%', maxWidth: wide ? MAX_CONTENT_WIDTH : undefined }}>{children}</View>
        </ScrollView>
      </View>
    </View>
  );
}
