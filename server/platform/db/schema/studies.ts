import { doublePrecision, integer, jsonb, pgEnum, pgTable, serial, text } from 'drizzle-orm/pg-core';
import {
  DECLARED_ANSWERS,
  DECLARED_CHANGES,
  STORAGE_CATEGORIES,
} from '../../../../shared/kinetics/stability/q1e-declaration.ts';
import {
  CENSORED_RULES,
  MASS_BALANCE_ROLES,
  type StudyAttribute,
} from '../../../../shared/kinetics/stability/study-attributes.ts';
import { createdAt, updatedAt } from './columns.ts';
import { organisations } from './organisations.ts';
import { users } from './users.ts';

/** Which way the attribute moves on storage; decides the one- or two-sided Q1E limit. */
export const attributeDirectionEnum = pgEnum('attribute_direction', ['decreasing', 'increasing', 'either']);

/** How results below a reporting limit enter the fit (shared/kinetics/stability/study-attributes.ts). */
export const censoredRuleEnum = pgEnum('censored_rule', CENSORED_RULES);
/** An attribute's part in the mass-balance check. */
export const massBalanceRoleEnum = pgEnum('mass_balance_role', MASS_BALANCE_ROLES);

/** Label storage of the product for the ICH Q1E extrapolation limit; 'unknown' until stated. */
export const storageCategoryEnum = pgEnum('storage_category', STORAGE_CATEGORIES);
/** Significant change at a condition (ICH Q1A(R2) §2.2.7.1); 'unknown' until stated. */
export const declaredChangeEnum = pgEnum('declared_change', DECLARED_CHANGES);
/** A yes/no statement of the study; 'unknown' until stated. */
export const declaredAnswerEnum = pgEnum('declared_answer', DECLARED_ANSWERS);

/**
 * A stability study: one product, the attributes measured with their acceptance criteria, the
 * storage condition and the batches on test. Changes are audit events with before/after values.
 */
export const studies = pgTable('studies', {
  id: serial('id').primaryKey(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  title: text('title').notNull(),
  product: text('product').notNull(),
  /** What is measured, e.g. "Assay" or "Impurity B". */
  attribute: text('attribute').notNull(),
  /** Unit of the measured value, e.g. "% of label claim", "mg/mL", "% area". */
  unit: text('unit').notNull(),
  direction: attributeDirectionEnum('direction').notNull(),
  /** Acceptance criterion: lower and/or upper limit in `unit`. */
  lowerLimit: doublePrecision('lower_limit'),
  upperLimit: doublePrecision('upper_limit'),
  /** Long-term storage condition the shelf-life is claimed for. */
  storageTemperatureC: doublePrecision('storage_temperature_c'),
  storageHumidityPercent: doublePrecision('storage_humidity_percent'),
  /*
   * The Q1E declaration: the role of each condition and what the data of one attribute cannot
   * show. The long-term condition is the storage temperature above. Unknown answers take the most
   * conservative branch of the ICH Q1E decision tree (shared/kinetics/stability/q1e-declaration.ts).
   */
  storageCategory: storageCategoryEnum('storage_category').notNull().default('unknown'),
  intermediateTemperatureC: doublePrecision('intermediate_temperature_c'),
  acceleratedTemperatureC: doublePrecision('accelerated_temperature_c'),
  acceleratedChange: declaredChangeEnum('accelerated_change').notNull().default('unknown'),
  intermediateChange: declaredChangeEnum('intermediate_change').notNull().default('unknown'),
  littleChange: declaredAnswerEnum('little_change').notNull().default('unknown'),
  supportingData: declaredAnswerEnum('supporting_data').notNull().default('unknown'),
  /** Where the statements come from (report numbers of the accelerated study, supporting batches). */
  declarationBasis: text('declaration_basis').notNull().default(''),
  /**
   * The working order the study's protocol states (0, 1, 2), with its reason: the analysis uses it
   * only where the data do not name an order, labelled "working order from the study".
   */
  workingOrder: integer('working_order'),
  workingOrderReason: text('working_order_reason').notNull().default(''),
  /** How the first attribute's results below a limit ("<LOQ") enter the fit, and its stated value. */
  censoredRule: censoredRuleEnum('censored_rule').notNull().default('exclude'),
  censoredValue: doublePrecision('censored_value'),
  /** The first attribute's part in the mass-balance check; null for none. */
  massBalanceRole: massBalanceRoleEnum('mass_balance_role'),
  /**
   * Every attribute after the first, in the study's order, each with its own unit, direction,
   * acceptance criterion, working order and censored-value rule. Empty for a study of one
   * attribute (every study recorded before attributes were listed).
   */
  additionalAttributes: jsonb('additional_attributes').$type<StudyAttribute[]>().notNull().default([]),
  /** Batch (lot) identifiers on test. */
  batches: jsonb('batches').$type<string[]>().notNull().default([]),
  notes: text('notes').notNull().default(''),
  createdBy: integer('created_by')
    .notNull()
    .references(() => users.id),
  createdAt: createdAt(),
  updatedAt: updatedAt(),
});
