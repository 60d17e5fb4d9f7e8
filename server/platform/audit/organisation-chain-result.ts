import type { TrailCheck, TrailFinding } from './audit-trail-check.ts';

/**
 * What one organisation is told about the shared chain. The chain is one across organisations
 * (each hash links to the previous event, whoever's it is), so it is checked whole; each
 * organisation then sees only its own result: the number of its own events, and only the findings
 * that touch its own events. A finding about events that are gone (deleted ids, a deleted tail) or
 * about the checkpoint log itself cannot be pinned to an organisation and is shown to every one,
 * worded so that it names no other organisation and shows none of its content.
 */

export interface OrganisationFinding {
  kind: TrailFinding['kind'];
  fromId: number;
  toId: number;
  message: string;
}

export interface OrganisationChainResult {
  ok: boolean;
  /** This organisation's events that were read and recomputed. */
  eventsChecked: number;
  /** Kept for the pages that read older outcomes: the first own event found broken. */
  firstBrokenLink?: { id: number; reason: string };
  findings: OrganisationFinding[];
  anchoring: {
    lastCheckpoint: { headId: number; at: string } | null;
    checkpointsCompared: number;
    /** This organisation's events newer than the last checkpoint: the window nothing outside vouches for. */
    unanchoredEvents: number;
  };
}

const REASON_BY_KIND: Record<TrailFinding['kind'], string> = {
  altered: 'content does not match its stored hash',
  link: 'previous-hash link does not match the preceding event',
  rewritten: 'its hash differs from the checkpoint signed outside the database',
  missing: 'events are missing from the trail',
  'checkpoint-unverifiable': 'a checkpoint cannot be verified',
};

export function organisationChainResult(check: TrailCheck, organisationId: number): OrganisationChainResult {
  const own = check.findings.filter(
    (finding) => finding.organisations === 'unknown' || finding.organisations.includes(organisationId),
  );
  const tally = check.tallies.get(organisationId) ?? { events: 0, unanchored: 0 };
  const first = own.find((finding) => finding.kind !== 'checkpoint-unverifiable');
  return {
    ok: own.length === 0,
    eventsChecked: tally.events,
    ...(first ? { firstBrokenLink: { id: first.toId, reason: REASON_BY_KIND[first.kind] } } : {}),
    findings: own.map(({ kind, fromId, toId, message }) => ({
      kind,
      fromId,
      toId,
      // A rewrite's message names the range of the whole chain; this organisation is told which of its own events lie in it.
      message,
    })),
    anchoring: {
      lastCheckpoint: check.lastCheckpoint,
      checkpointsCompared: check.checkpointsCompared,
      unanchoredEvents: tally.unanchored,
    },
  };
}
