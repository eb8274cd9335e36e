/**
 * Invented names for the Aldermere demo (docs/design.md#demo-data): people, firms, banks,
 * streets and towns of a fictional county. Surnames are built from syllables so they are
 * nobody in particular; towns and firms are made up. E-mail addresses use the reserved
 * example.net domain, so no mail can reach a real person.
 */
import type { ActivityCode } from '../returns/line-codes';
import type { Rng } from './prng';

const GIVEN = [
  'Ada',
  'Alder',
  'Anwen',
  'Bram',
  'Briony',
  'Caspar',
  'Cerys',
  'Dorran',
  'Edda',
  'Elric',
  'Fen',
  'Greer',
  'Hale',
  'Ilsa',
  'Ivo',
  'Jory',
  'Kestrel',
  'Linnet',
  'Lorcan',
  'Mabli',
  'Maud',
  'Nell',
  'Odran',
  'Osric',
  'Perrin',
  'Quill',
  'Rhosyn',
  'Rook',
  'Sable',
  'Seren',
  'Tamsin',
  'Tobin',
  'Ulla',
  'Vesna',
  'Wren',
  'Yarrow',
  'Zeph',
  'Hollis',
  'Marten',
  'Sorrel',
];
const SUR_HEAD = [
  'Ald',
  'Brack',
  'Corr',
  'Dun',
  'Fenn',
  'Garr',
  'Hollo',
  'Kettle',
  'Lamm',
  'Marr',
  'Norr',
  'Orl',
  'Pell',
  'Quarr',
  'Rell',
  'Stall',
  'Tamb',
  'Umber',
  'Vell',
  'Wick',
  'Yarl',
  'Thistle',
  'Brinde',
  'Cobb',
];
const SUR_TAIL = ['ey', 'ender', 'ick', 'ow', 'ett', 'by', 'wright', 'mere', 'ling', 'stone', 'hallow', 'ford', 'ington', 'ock'];
const TOWNS = ['Aldermere', 'Marrowby', 'Fennick Cross', 'Stallow', 'Quenby Vale', 'Orlstead', 'Hollowmouth', 'Brindle Green', 'Kettleby'];
const STREET = ['Mill', 'Tanner', 'Chapel', 'Weir', 'Orchard', 'Cooper', 'Lantern', 'Sluice', 'Rope', 'Bell', 'Wool', 'Salt'];
const STREET_KIND = ['Lane', 'Row', 'Street', 'Close', 'Yard', 'Walk'];
const TRADE: Record<ActivityCode, readonly string[]> = {
  none: ['Household'],
  retail: ['Hardware', 'Grocers', 'Books', 'Outfitters', 'Chandlery'],
  'food-service': ['Bakery', 'Tea Rooms', 'Kitchen', 'Fish Bar', 'Larder'],
  construction: ['Builders', 'Roofing', 'Joinery', 'Stoneworks', 'Plastering'],
  'personal-care': ['Hair Studio', 'Nail Bar', 'Barbers', 'Wellness Rooms'],
  consulting: ['Advisory', 'Associates', 'Consulting', 'Partners'],
  transport: ['Haulage', 'Cabs', 'Couriers', 'Removals'],
  rental: ['Lettings', 'Property', 'Holiday Lets'],
  farming: ['Farm', 'Orchards', 'Dairy', 'Smallholding'],
  other: ['Services', 'Workshop', 'Studio'],
};
/** Employers of Aldermere (invented). */
export const EMPLOYERS = [
  'Aldermere County Council',
  'Stallow Mills Ltd',
  'Marrowby Infirmary Trust',
  'Quenby Vale Schools',
  'Fennick Cross Brewery',
  'Orlstead Freight Co',
  'Hollowmouth Harbour Board',
  'Kettleby Foundry',
  'Brindle Green Dairies',
  'Aldermere Water Company',
  'Weirside Printing Works',
  'Lantern Row Logistics',
] as const;
/** Banks and building societies (invented). */
export const BANKS = ['Bank of Aldermere', 'Fenmouth Building Society', 'Stallow Savings Bank', 'Marrowby Mutual', 'Quenby Credit Union'] as const;
/** Card-payment processor that reports business sales (invented). */
export const SALES_REPORTER = 'Aldermere Card Services';

/** An invented surname. */
export function surname(rng: Rng): string {
  return rng.pick(SUR_HEAD) + rng.pick(SUR_TAIL);
}

/** An invented full name. */
export function personName(rng: Rng): { given: string; family: string; full: string } {
  const given = rng.pick(GIVEN);
  const family = surname(rng);
  return { given, family, full: `${given} ${family}` };
}

/** A trading name for a taxpayer's business, e.g. "Orlow Bakery". */
export function businessName(rng: Rng, family: string, activity: ActivityCode): string {
  return `${family} ${rng.pick(TRADE[activity])}`;
}

/** A postal address in the county. */
export function postalAddress(rng: Rng): string {
  return `${rng.int(1, 180)} ${rng.pick(STREET)} ${rng.pick(STREET_KIND)}, ${rng.pick(TOWNS)}, Aldermere County`;
}

/** An e-mail address on the reserved example.net domain. */
export function emailFor(rng: Rng, given: string, family: string): string {
  return `${given}.${family}${rng.int(1, 99)}@example.net`.toLowerCase();
}
