/**
 * Which returns a profile selects in a scored batch (issue 17, docs/methods.md#programme-outcomes):
 * by a fixed cut, or by capacity (the team's cases per month × the months a batch should feed,
 * the cut being the score that fills it, ties broken by priority). The scoring run's finishing
 * step and the Scoring screen's preview both choose through {@link chooseSelection}, so a preview
 * counts exactly what a re-score then selects. Pure.
 */
import { countedComponents } from '../scoring/registry';
import { COMPONENTS, type ComponentKey, type ScoringSettings } from '../scoring/settings';

/** A scored return as the selection sees it. */
export interface Scored {
  returnId: string;
  riskScore: number;
  priority: number;
}

/** How many returns a capacity asks for: cases per month × months, rounded. */
export function capacityTarget(capacity: NonNullable<ScoringSettings['capacity']>): number {
  return Math.max(1, Math.round(capacity.casesPerMonth * capacity.months));
}

/**
 * Orders returns as a capacity selection takes them: higher score first, then higher priority,
 * then return id (so the order never depends on how the rows arrived).
 */
export function selectionOrder(a: Scored, b: Scored): number {
  return b.riskScore - a.riskScore || b.priority - a.priority || (a.returnId < b.returnId ? -1 : a.returnId > b.returnId ? 1 : 0);
}

/** What a profile selects in a batch: the ids, and the cut in force (the last selected score under capacity). */
export function chooseSelection(rows: readonly Scored[], settings: Pick<ScoringSettings, 'selectionCut' | 'capacity'>): { ids: string[]; cut: number | null } {
  if (!settings.capacity) {
    return { ids: rows.filter((r) => r.riskScore >= settings.selectionCut).map((r) => r.returnId), cut: settings.selectionCut };
  }
  // A return nothing pointed at (score 0) is never selected, whatever the capacity.
  const top = rows
    .filter((r) => r.riskScore > 0)
    .sort(selectionOrder)
    .slice(0, capacityTarget(settings.capacity));
  return { ids: top.map((r) => r.returnId), cut: top.length ? top[top.length - 1].riskScore : null };
}

/** A stored component of a score: the weight it was scored with, its strength (3 decimals) and its points. */
export interface StoredComponent {
  key: ComponentKey;
  weight: number;
  strength: number;
  points: number;
}

const round1 = (x: number) => Math.round(x * 10) / 10;

/**
 * A return's score under other weights, from its stored components, as shared/scoring/score-return.ts
 * adds them up: weight × strength, only the strongest member of a group counting, each rounded to
 * 0.1, the sum capped at 100. A component whose weight is unchanged keeps its stored points
 * (exact); a changed one uses the stored strength, which has 3 decimals, so a score within a
 * few hundredths of the cut may differ from a real re-score.
 */
export function rescore(
  components: readonly StoredComponent[],
  weights: Record<ComponentKey, number>,
  stakeCents: number,
): { riskScore: number; priority: number } {
  const byKey = new Map(components.map((c) => [c.key, c]));
  const raw = COMPONENTS.map((key) => {
    const c = byKey.get(key);
    const w = weights[key];
    if (!c) return { key, full: 0, points: 0 };
    const unchanged = c.weight === w;
    // Unchanged weight: the stored points are weight × strength before the strength was rounded.
    const full = unchanged && c.points > 0 ? c.points : w * c.strength;
    return { key, full, points: unchanged && c.points > 0 ? c.points : round1(full) };
  });
  const counted = countedComponents(raw);
  const riskScore = Math.min(100, round1(raw.reduce((s, r) => s + (counted.has(r.key) ? r.points : 0), 0)));
  return { riskScore, priority: Math.round(riskScore * stakeCents) / 100 };
}

/** Counts of a preview: selected, and against today's selection, how many stay, leave and join. */
export interface SelectionChange {
  selected: number;
  stay: number;
  leave: number;
  join: number;
}

/** Compares a new selection with today's. */
export function compareSelections(today: ReadonlySet<string>, next: readonly string[]): SelectionChange {
  const nextSet = new Set(next);
  let stay = 0;
  for (const id of nextSet) if (today.has(id)) stay++;
  return { selected: nextSet.size, stay, leave: today.size - stay, join: nextSet.size - stay };
}
