/**
 * E-signature controls as the compliance matrix (docs/compliance.md) cites them:
 * - 21 CFR 11.200(a)(1): the first signing of a continuous session uses both components (user
 *   name and password), later signings in that session at least the password; a new session
 *   starts over; a signature cannot be given with another person's user name.
 * - 11.50 / 11.70: the stored signature carries printed name, meaning and UTC time, is shown with
 *   the record, and cannot be changed or moved to another record - even by the database owner.
 * Signing here is the approval of an identity method version (a real signed action of Drumline).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { agentFor, db, ownerDb, testApp, untyped } from './helpers';
import { approvableMaterial } from './fixtures-library';

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];
let author: Agent;
let signer: { agent: Agent; user: { id: number; username: string; fullName: string; password: string } };
let other: { user: { username: string; password: string } };
const owner = ownerDb();
afterAll(() => owner.destroy());

const approve = (agent: Agent, methodId: number, signature: Record<string, string>) =>
  agent.post(`/api/methods/${methodId}/approve`).send({ signature });

beforeAll(async () => {
  ({ agent: author } = await agentFor(['qa_manager']));
  signer = await agentFor(['qa_manager']);
  other = await agentFor(['qa_manager']);
});

describe('two components at the first signing of a session, the password after (21 CFR 11.200)', () => {
  it('password alone is refused at the first signing (audited); user name + password signs; then the password alone signs', async () => {
    const m1 = await approvableMaterial(author, 'Esign control one', 'nylon6_s074.csv');
    const m2 = await approvableMaterial(author, 'Esign control two', 'polyester-PET_s135_r2.csv');

    const first = await approve(signer.agent, m1.draftMethodId, { password: signer.user.password });
    expect(first.status).toBe(401);
    expect(first.body.error).toMatchObject({ code: 'SIGNATURE_REFUSED', details: { needsUsername: true } });
    const refused = await db()('audit_event').where({
      action: 'signature.refused',
      entity_type: 'identity_method',
      entity_id: String(m1.draftMethodId),
    });
    expect(refused).toHaveLength(1);
    expect(refused[0].actor_id).toBe(signer.user.id);
    expect(
      await db()('e_signature').where({ entity_type: 'identity_method', entity_id: String(m1.draftMethodId) }),
    ).toHaveLength(0);

    const before = Date.now();
    const ok = await approve(signer.agent, m1.draftMethodId, {
      username: signer.user.username,
      password: signer.user.password,
    });
    expect(ok.status).toBe(200);
    const s = (await db()('e_signature')
      .where({ entity_type: 'identity_method', entity_id: String(m1.draftMethodId) })
      .first())!;
    // 11.50: printed name, meaning, date and time (UTC, server clock)
    expect(s).toMatchObject({ user_id: signer.user.id, printed_name: signer.user.fullName, meaning: 'approved' });
    expect(Math.abs(new Date(s.signed_at).getTime() - before)).toBeLessThan(10_000);
    expect(s.content_hash).toMatch(/^[0-9a-f]{64}$/);
    expect((await signer.agent.get('/api/auth/me')).body.user.signedOnce).toBe(true);

    // later in the same session: the password (the private component) is enough
    const second = await approve(signer.agent, m2.draftMethodId, { password: signer.user.password });
    expect(second.status).toBe(200);
    // a wrong password still signs nothing
    const m3 = await approvableMaterial(author, 'Esign control three', 'wool_Coopworth_s11.3_r1.csv');
    expect((await approve(signer.agent, m3.draftMethodId, { password: 'not-my-password' })).status).toBe(401);

    // a new session starts over: both components again
    const fresh = request.agent(testApp());
    expect(
      (await fresh.post('/api/auth/sign-in').send({ username: signer.user.username, password: signer.user.password }))
        .status,
    ).toBe(200);
    const again = await approve(fresh, m3.draftMethodId, { password: signer.user.password });
    expect(again.status).toBe(401);
    expect(again.body.error.details).toMatchObject({ needsUsername: true });
  });

  it("a signature cannot be given in one's session with another person's user name and password", async () => {
    const m = await approvableMaterial(author, 'Esign control four', 'cotton_cord_s6.1_r1.csv');
    const fresh = request.agent(testApp());
    expect(
      (await fresh.post('/api/auth/sign-in').send({ username: signer.user.username, password: signer.user.password }))
        .status,
    ).toBe(200);
    const res = await approve(fresh, m.draftMethodId, { username: other.user.username, password: other.user.password });
    expect(res.status).toBe(401);
    expect(
      await db()('e_signature').where({ entity_type: 'identity_method', entity_id: String(m.draftMethodId) }),
    ).toHaveLength(0);
  });
});

describe('signatures stay with their record (21 CFR 11.50, 11.70; Annex 11 §14)', () => {
  it('is shown with the record (history) and cannot be changed or moved to another record, even by the owner account', async () => {
    const m = await approvableMaterial(author, 'Esign control five', 'para-aramid_s050.csv');
    expect(
      (await approve(signer.agent, m.draftMethodId, { username: signer.user.username, password: signer.user.password }))
        .status,
    ).toBe(200);
    const s = (await db()('e_signature')
      .where({ entity_type: 'identity_method', entity_id: String(m.draftMethodId) })
      .first())!;

    const { agent: auditor } = await agentFor(['auditor']);
    const h = await auditor.get(`/api/history/identity_method/${m.draftMethodId}`);
    expect(h.status).toBe(200);
    expect(h.body.signatures).toEqual([
      expect.objectContaining({
        id: s.id,
        printedName: signer.user.fullName,
        meaning: 'approved',
        contentHash: s.content_hash,
      }),
    ]);
    expect(h.body.events.map((e: { action: string }) => e.action)).toEqual(
      expect.arrayContaining(['signature.signed', 'method.approved']),
    );

    // moving the signature to another record: the runtime account lacks the privilege, the owner meets the trigger
    await expect(untyped(db(), 'e_signature').where({ id: s.id }).update({ entity_id: '1' })).rejects.toMatchObject({
      errno: 1142,
    });
    await expect(untyped(owner, 'e_signature').where({ id: s.id }).update({ entity_id: '1' })).rejects.toMatchObject({
      errno: 1644,
    });
    await expect(owner('e_signature').where({ id: s.id }).delete()).rejects.toMatchObject({ errno: 1644 });
    expect((await db()('e_signature').where({ id: s.id }).first())!.entity_id).toBe(String(m.draftMethodId));
  });
});
