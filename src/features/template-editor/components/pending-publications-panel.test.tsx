import { fireEvent, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import {
  decidePublicationResponseSchema,
  type PendingPublication,
  pendingPublicationsResponseSchema,
} from '../../../../shared/api/template-publication.ts';
import { json, mockApi, refusal } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import { PendingPublicationsPanel } from './pending-publications-panel.tsx';

/** Issue 13 §6: proposals waiting for a second admin, and that admin's decision with a reason. */

const proposal = (mayDecide: boolean): PendingPublication => ({
  id: 7,
  templateId: 2,
  versionId: 30,
  versionNumber: 3,
  previousVersionNumber: 2,
  rollback: false,
  reason: 'New stability unit name',
  proposedBy: 'Ada Admin',
  proposedAt: '2026-12-01T09:30:00.000Z',
  mayDecide,
});

function api(mayDecide: boolean, needsSecondAdmin = true) {
  const pending = [proposal(mayDecide)];
  return mockApi([
    {
      path: '/api/admin/templates/2/publications',
      respond: () => json(200, pendingPublicationsResponseSchema.parse({ needsSecondAdmin, pending })),
    },
    {
      method: 'POST',
      path: '/api/admin/templates/2/publications/7/decision',
      respond: () => {
        pending.length = 0;
        return json(
          200,
          decidePublicationResponseSchema.parse({
            decision: 'approved',
            published: {
              publishedVersionId: 30,
              publishedVersionNumber: 3,
              previousVersionNumber: 2,
              rolledBack: false,
            },
          }),
        );
      },
    },
    { path: '/api/admin/templates/2', respond: () => refusal(501, 'not needed here') },
  ]);
}

describe('the pending publications panel', () => {
  it('tells the proposer that another admin decides, and offers them no approve button', async () => {
    api(false);
    renderWithQueries(<PendingPublicationsPanel templateId={2} />);
    expect(await screen.findByText('You proposed this; another admin approves or refuses it.')).toBeDefined();
    expect(
      screen.getByText(/Proposed by Ada Admin, 2026-12-01 09:30 UTC\. Reason: New stability unit name/),
    ).toBeDefined();
    expect(screen.queryByRole('button', { name: 'Approve and publish' })).toBeNull();
  });

  it('lets another admin approve only with a reason and a confirmation', async () => {
    const requests = api(true);
    renderWithQueries(<PendingPublicationsPanel templateId={2} />);
    const form = await screen.findByRole('form', { name: 'Decide: Publish version 3' });
    fireEvent.click(within(form).getByRole('button', { name: 'Approve and publish' }));
    expect(
      await within(form).findByText('Give the reason for your decision; it is recorded in the audit trail.'),
    ).toBeDefined();
    expect(within(form).getByText('Confirm your decision.')).toBeDefined();
    const decisions = () => requests.filter((request) => request.url.pathname.endsWith('/decision'));
    expect(decisions()).toHaveLength(0);

    fireEvent.change(within(form).getByRole('textbox'), { target: { value: 'Only the letterhead changed' } });
    fireEvent.click(within(form).getByRole('checkbox'));
    fireEvent.click(within(form).getByRole('button', { name: 'Approve and publish' }));
    expect(await screen.findByText('Nothing is waiting.')).toBeDefined();
    expect(decisions()).toHaveLength(1);
    expect(JSON.parse(String(decisions()[0]!.body))).toEqual({
      decision: 'approve',
      reason: 'Only the letterhead changed',
      confirmed: true,
    });
  });

  it('shows nothing when the rule is off and nothing waits', async () => {
    mockApi([
      {
        path: '/api/admin/templates/2/publications',
        respond: () => json(200, { needsSecondAdmin: false, pending: [] }),
      },
    ]);
    const { container } = renderWithQueries(<PendingPublicationsPanel templateId={2} />);
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect(container.textContent).toBe('');
  });
});
