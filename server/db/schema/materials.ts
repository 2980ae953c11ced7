// Materials: alloys and their prices, the metal ledger (bought, issued, returned, refined), refining lots, and the stones of each piece.
// Weights are integer milligrams and money integer minor units of the workshop's currency, so nothing is lost to floating point.
import { boolean, date, index, integer, pgTable, real, text, uniqueIndex } from 'drizzle-orm/pg-core'
import { createdAt, instant, pk, version } from './common'
import { operationKinds, people } from './resources'
import { customers, jobBags, operations } from './work'
import { users, workshops } from './workshop'

/** An alloy the workshop works in: its metal, legal fineness (parts per thousand) and density (g/cm³). */
export const alloys = pgTable(
  'alloys',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    code: text().notNull(),
    name: text().notNull(),
    /** gold | silver | platinum | palladium | base (brass, copper: no fineness). */
    metal: text().$type<'gold' | 'silver' | 'platinum' | 'palladium' | 'base'>().notNull(),
    /** Parts per thousand of the precious metal (a legal standard); 0 for base metals. */
    fineness: integer().notNull(),
    densityGPerCm3: real().notNull(),
    active: boolean().notNull().default(true),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.code)],
)

/** The price of a gram of an alloy from a date on, as the owner entered it; earlier prices are kept (history). */
export const alloyPrices = pgTable(
  'alloy_prices',
  {
    id: pk(),
    alloyId: integer()
      .notNull()
      .references(() => alloys.id, { onDelete: 'cascade' }),
    /** Minor units of the workshop's currency per gram (e.g. pence per gram). */
    pricePerGramMinor: integer().notNull(),
    effectiveOn: date({ mode: 'string' }).notNull(),
    setBy: integer().references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.alloyId, t.effectiveOn)],
)

/** A refining lot: scrap and lemel collected, sent to the refiner, and what the refiner credited back. */
export const refiningLots = pgTable(
  'refining_lots',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    number: text().notNull(),
    /** open (collecting) → sent → settled (credit recorded). */
    status: text().$type<'open' | 'sent' | 'settled'>().notNull().default('open'),
    refiner: text().notNull().default(''),
    sentAt: instant(),
    settledAt: instant(),
    /** Fine metal the refiner credited, in mg, and any money credited instead (minor units). */
    creditedFineMg: integer(),
    creditedMinor: integer(),
    notes: text().notNull().default(''),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.number)],
)

/**
 * The metal ledger: every movement of an alloy, by weight in mg. Stock of an alloy = bought + returned + back from refining
 * − issued − sent to refining − delivered − customers' loss at hand-back (customer's own metal is issued and returned but never bought). Rows are never edited:
 * a correction is a new row that names the row it corrects, who made it and why.
 */
export const metalMovements = pgTable(
  'metal_movements',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    alloyId: integer()
      .notNull()
      .references(() => alloys.id),
    /**
     * bought | issued | returned | to-refining | from-refining | adjusted (stock count difference) | delivered (the finished piece left
     * with its order, or the customer's piece handed back) | customer-loss (the customer's piece handed back lighter or heavier than
     * held: their metal lost, or gained when negative; it leaves the balance with the piece, never touching the workshop's own).
     */
    kind: text().$type<'bought' | 'issued' | 'returned' | 'to-refining' | 'from-refining' | 'adjusted' | 'delivered' | 'customer-loss'>().notNull(),
    /** Signed milligrams as entered for the kind (always > 0 except for corrections, adjustments and a customer's gain, which may be negative). */
    weightMg: integer().notNull(),
    /** Issued metal: from the workshop's stock or the customer's own (old gold to be remade). */
    source: text().$type<'stock' | 'customer'>(),
    /** Returned metal: as the piece, clean scrap, or filings and sweeps (lemel). */
    form: text().$type<'piece' | 'scrap' | 'lemel'>(),
    jobBagId: integer().references(() => jobBags.id, { onDelete: 'set null' }),
    operationId: integer().references(() => operations.id, { onDelete: 'set null' }),
    personId: integer().references(() => people.id, { onDelete: 'set null' }),
    refiningLotId: integer().references(() => refiningLots.id, { onDelete: 'set null' }),
    /** Bought metal: what it cost (minor units), for the stock's value. */
    costMinor: integer(),
    /** A correction names the row it corrects and says why. */
    correctsId: integer(),
    reason: text().notNull().default(''),
    recordedBy: integer().references(() => users.id, { onDelete: 'set null' }),
    recordedAt: instant().notNull(),
    /** Client-generated id: a replayed request finds its earlier row instead of writing a second. */
    clientId: text(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.workshopId, t.alloyId), index().on(t.jobBagId), index().on(t.refiningLotId), uniqueIndex().on(t.workshopId, t.clientId)],
)

/** How much metal loss a kind of work may have before it is flagged (% of the metal issued for it). */
export const lossTolerances = pgTable('loss_tolerances', {
  kindId: integer()
    .primaryKey()
    .references(() => operationKinds.id, { onDelete: 'cascade' }),
  tolerancePct: real().notNull(),
  version: version(),
})

/** One line of a piece's stone list. */
export const jobBagStones = pgTable(
  'job_bag_stones',
  {
    id: pk(),
    jobBagId: integer()
      .notNull()
      .references(() => jobBags.id, { onDelete: 'cascade' }),
    /** centre | side | halo | pave */
    role: text().$type<'centre' | 'side' | 'halo' | 'pave'>().notNull(),
    stone: text().notNull().default('diamond'),
    shape: text().notNull().default('round'),
    sizeMm: real().notNull(),
    count: integer().notNull(),
    /** Carats per stone; estimated from the size for round brilliants when not entered. */
    caratEach: real(),
    caratEstimated: boolean().notNull().default(false),
    /** Measured total depth of one stone (mm), when the setter or the stone's paper gives it. */
    depthMm: real(),
    quality: text().notNull().default(''),
    customerOwned: boolean().notNull().default(false),
    customerId: integer().references(() => customers.id, { onDelete: 'set null' }),
    /** Cost of one stone (minor units); null for the customer's own stones or when not known. */
    costEachMinor: integer(),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.jobBagId)],
)

/** Stones counted out to the setter and back: issued = set + returned + broken + lost, per stone line. */
export const stoneMovements = pgTable(
  'stone_movements',
  {
    id: pk(),
    stoneLineId: integer()
      .notNull()
      .references(() => jobBagStones.id, { onDelete: 'cascade' }),
    /** issued | set | returned | broken | lost | checked-back (a customer's own stones at collection) */
    kind: text().$type<'issued' | 'set' | 'returned' | 'broken' | 'lost' | 'checked-back'>().notNull(),
    /** Signed: a correction may be negative. */
    count: integer().notNull(),
    personId: integer().references(() => people.id, { onDelete: 'set null' }),
    operationId: integer().references(() => operations.id, { onDelete: 'set null' }),
    correctsId: integer(),
    reason: text().notNull().default(''),
    recordedBy: integer().references(() => users.id, { onDelete: 'set null' }),
    recordedAt: instant().notNull(),
    clientId: text(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.stoneLineId), uniqueIndex().on(t.clientId)],
)
