import { fileURLToPath } from 'node:url';
import { eq } from 'drizzle-orm';
import { appendAuditEvent } from '../platform/audit/audit-trail.ts';
import { hashPassword } from '../platform/auth/passwords.ts';
import { type Database, openDatabase } from '../platform/db/client.ts';
import { memberships, organisations, users } from '../platform/db/schema/index.ts';
import { DEMO_ACCOUNTS, DEMO_ORGANISATION } from './demo-accounts.ts';
import { RESULTS_DEMO_RECIPE } from './demo-stability-results.ts';
import { seedDemoStudy } from './demo-study.ts';
import { seedDemoTemperatureLog } from './demo-temperature-log.ts';

/**
 * Seeds the demo organisation once. When the organisation already exists nothing is touched, so
 * a second `npm start` never overwrites what users changed.
 */
export async function seedDemo(db: Database): Promise<'seeded' | 'already-present'> {
  const existing = await db.query.organisations.findFirst({
    where: eq(organisations.slug, DEMO_ORGANISATION.slug),
  });
  if (existing) return 'already-present';
  const hashes = await Promise.all(DEMO_ACCOUNTS.map((account) => hashPassword(account.password)));
  const seeded = await db.transaction(async (tx) => {
    const [organisation] = await tx
      .insert(organisations)
      .values({ ...DEMO_ORGANISATION })
      .returning();
    for (const [index, account] of DEMO_ACCOUNTS.entries()) {
      const [user] = await tx
        .insert(users)
        .values({ email: account.email, fullName: account.fullName, passwordHash: hashes[index]! })
        .onConflictDoNothing()
        .returning();
      if (!user) continue;
      for (const role of account.roles) {
        await tx.insert(memberships).values({ userId: user.id, organisationId: organisation!.id, role });
      }
    }
    await appendAuditEvent(tx, {
      organisationId: organisation!.id,
      actorLabel: 'system (demo seed)',
      action: 'organisation.seeded',
      recordType: 'organisation',
      recordId: organisation!.id,
      after: {
        name: organisation!.name,
        accounts: DEMO_ACCOUNTS.map((account) => ({ email: account.email, roles: account.roles })),
      },
    });
    const study = await seedDemoStudy(tx, { organisationId: organisation!.id }, RESULTS_DEMO_RECIPE);
    return { organisation: organisation!, studyId: study.studyId };
  });
  // After the study's transaction: the assessment reads the study's committed analysis.
  const analystAccount = DEMO_ACCOUNTS.find((account) => account.roles.includes('analyst'))!;
  const [analyst] = await db.select().from(users).where(eq(users.email, analystAccount.email));
  await seedDemoTemperatureLog(
    db,
    {
      id: analyst!.id,
      email: analyst!.email,
      fullName: analyst!.fullName,
      organisationId: seeded.organisation.id,
      organisationName: seeded.organisation.name,
      roles: analystAccount.roles,
    },
    seeded.studyId,
  );
  return 'seeded';
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error('DATABASE_URL is not set');
    process.exit(1);
  }
  const handle = openDatabase(url);
  try {
    const outcome = await seedDemo(handle.db);
    console.log(
      outcome === 'seeded'
        ? '[rateledger] demo organisation seeded'
        : '[rateledger] demo organisation already present; not re-seeded',
    );
  } finally {
    await handle.close();
  }
}
