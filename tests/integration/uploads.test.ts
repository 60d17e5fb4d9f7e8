import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import ExcelJS from 'exceljs';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, studies, uploads } from '../../server/platform/db/schema/index.ts';
import { UPLOAD_SIZE_LIMIT_BYTES } from '../../shared/api/uploads.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
let studyId: number;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  const [study] = await world.database.db
    .insert(studies)
    .values({
      organisationId: world.organisationId,
      title: 'Upload tests',
      product: 'Orvellin 250 mg (invented)',
      attribute: 'Assay',
      unit: '% of label claim',
      direction: 'decreasing',
      lowerLimit: 95,
      createdBy: world.users.analyst!.id,
    })
    .returning();
  studyId = study!.id;
  ({ agent: analyst } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password));
  token = csrfFrom((await analyst.get('/')).text);
});
afterAll(() => world.close());

async function workbook(fill: (book: ExcelJS.Workbook) => void): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  fill(book);
  return Buffer.from(await book.xlsx.writeBuffer());
}

const goodWorkbook = () =>
  workbook((book) => {
    const sheet = book.addWorksheet('Sheet1');
    sheet.addRows([
      ['Batch', 'Month', 'Assay'],
      ['OR-2401', 0, 100.2],
      ['OR-2401', 3, 99.1],
      ['OR-2401', 6, 98.3],
    ]);
  });

const upload = (bytes: Buffer, name: string) =>
  analyst.post(`/api/studies/${studyId}/uploads`).set('x-csrf-token', token).attach('file', bytes, name);

const uploadCount = () => world.database.db.$count(uploads, eq(uploads.organisationId, world.organisationId));

/** Asserts a clear 4xx JSON refusal whose message matches, and that no upload row was added. */
async function expectRefused(bytes: Buffer, name: string, status: number, message: RegExp) {
  const before = await uploadCount();
  const response = await upload(bytes, name);
  expect(response.status).toBe(status);
  expect(response.body.error.message).toMatch(message);
  expect(await uploadCount()).toBe(before);
  return response;
}

describe('upload', () => {
  it('stores the original byte for byte with the SHA-256 of the bytes sent, uploader, time and an audit event', async () => {
    const bytes = await goodWorkbook();
    const response = await upload(bytes, 'stability ü.xlsx');
    expect(response.status).toBe(201);
    const expectedHash = createHash('sha256').update(bytes).digest('hex');
    expect(response.body.sha256).toBe(expectedHash);
    expect(response.body.mapUrl).toBe(`/uploads/${response.body.uploadId}/map`);

    const [row] = await world.database.db
      .select()
      .from(uploads)
      .where(eq(uploads.id, response.body.uploadId));
    expect(Buffer.compare(row!.content, bytes)).toBe(0);
    expect(createHash('sha256').update(row!.content).digest('hex')).toBe(expectedHash);
    expect(row).toMatchObject({
      format: 'xlsx',
      sizeBytes: bytes.length,
      uploadedBy: world.users.analyst!.id,
      fileName: 'stability ü.xlsx',
    });
    expect(row!.uploadedAt).toBeInstanceOf(Date);

    const original = await analyst
      .get(`/uploads/${row!.id}/original`)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => done(null, Buffer.concat(chunks)));
      });
    expect(Buffer.compare(original.body as Buffer, bytes)).toBe(0);

    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        and(
          eq(auditEvents.organisationId, world.organisationId),
          eq(auditEvents.recordType, 'upload'),
          eq(auditEvents.recordId, String(row!.id)),
        ),
      );
    expect(event).toMatchObject({ action: 'upload.stored', actorUserId: world.users.analyst!.id });
    expect(event!.afterValue).toMatchObject({ sha256: expectedHash, sizeBytes: bytes.length });
  });

  it('the stored original cannot be changed or deleted (write-once in the database)', async () => {
    const response = await upload(await goodWorkbook(), 'write-once.xlsx');
    await expect(
      world.database.db
        .update(uploads)
        .set({ fileName: 'changed.xlsx' })
        .where(eq(uploads.id, response.body.uploadId)),
    ).rejects.toThrow();
  });

  it('decides the format from the content: a CSV named .txt is a CSV', async () => {
    const response = await upload(Buffer.from('Month,Assay\n0,100.1\n3,99.0\n'), 'export.txt');
    expect(response.status).toBe(201);
    const [row] = await world.database.db
      .select()
      .from(uploads)
      .where(eq(uploads.id, response.body.uploadId));
    expect(row!.format).toBe('csv');
  });

  it('over the size limit: 413 with a JSON message naming the limit, nothing stored, and the server keeps serving', async () => {
    const tooBig = Buffer.alloc(UPLOAD_SIZE_LIMIT_BYTES + 1, 0x41);
    const response = await expectRefused(tooBig, 'huge.csv', 413, /larger than the upload limit of 10 MB/);
    expect(response.headers['content-type']).toMatch(/application\/json/);
    expect((await request(world.app).get('/healthz')).status).toBe(200);
    expect((await upload(await goodWorkbook(), 'after-the-big-one.xlsx')).status).toBe(201);
  });

  it('not a workbook at all (binary content) → 422 saying so', async () => {
    const png = Buffer.from([
      0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d, 0x49, 0x48, 0x44, 0x52, 0, 0, 1, 0,
    ]);
    await expectRefused(png, 'photo.png', 422, /neither an Excel workbook \(\.xlsx\) nor a CSV/);
    await expectRefused(
      Buffer.from('just some words, not a workbook'),
      'named-like.xlsx',
      422,
      /not an Excel workbook/,
    );
  });

  it('a truncated workbook → 422 "incomplete or damaged"', async () => {
    const bytes = await goodWorkbook();
    await expectRefused(
      bytes.subarray(0, Math.floor(bytes.length / 2)),
      'cut.xlsx',
      422,
      /incomplete or damaged/,
    );
  });

  it('a workbook that would unpack past the limit (a crafted "ZIP bomb") → 422 naming the limit, nothing stored', async () => {
    // The sheet's central-directory header (PKWARE APPNOTE 4.3.12: uncompressed size at +24) is
    // made to declare 4 GB; the reader refuses it before inflating anything.
    const bytes = Buffer.from(await goodWorkbook());
    const name = Buffer.from('xl/worksheets/sheet1.xml');
    let header = bytes.indexOf(Buffer.from([0x50, 0x4b, 0x01, 0x02]));
    while (header >= 0 && !bytes.subarray(header + 46, header + 46 + name.length).equals(name))
      header = bytes.indexOf(Buffer.from([0x50, 0x4b, 0x01, 0x02]), header + 4);
    expect(header).toBeGreaterThan(0);
    bytes.writeUInt32LE(0xfffffff0, header + 24);
    const response = await expectRefused(bytes, 'huge.xlsx', 422, /unpack to at most 200 MB/);
    expect(response.body.error.details).toEqual({ code: 'workbook-too-large' });
    expect((await analyst.get('/healthz')).status).toBe(200);
  });

  it('a password-protected workbook (an OLE compound file holding an EncryptedPackage) → 422 naming the password', async () => {
    const header = Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]);
    const bytes = Buffer.concat([
      header,
      Buffer.alloc(504),
      Buffer.from('EncryptedPackage', 'utf16le'),
      Buffer.alloc(512),
    ]);
    await expectRefused(bytes, 'locked.xlsx', 422, /protected by a password/);
    // Without the encrypted stream it is the old binary format.
    await expectRefused(Buffer.concat([header, Buffer.alloc(1024)]), 'old.xls', 422, /old-format Excel file/);
  });

  it('a workbook whose only sheet is empty → 422 naming the sheet', async () => {
    const bytes = await workbook((book) => {
      book.addWorksheet('Results');
    });
    await expectRefused(bytes, 'empty.xlsx', 422, /The sheet "Results" is empty/);
    await expectRefused(Buffer.from('\uFEFF  \r\n\r\n'), 'blank.csv', 422, /empty/);
  });

  it('refuses a request without a file (400), a reviewer (403), a missing CSRF token (403), an unknown study (404)', async () => {
    const none = await analyst
      .post(`/api/studies/${studyId}/uploads`)
      .set('x-csrf-token', token)
      .field('note', 'no file');
    expect(none.status).toBe(400);
    expect(none.body.error.message).toMatch(/Choose a file/);
    const { agent: reviewer } = await signIn(
      world.app,
      world.users.reviewer!.email,
      world.users.reviewer!.password,
    );
    const reviewerToken = csrfFrom((await reviewer.get('/')).text);
    const refused = await reviewer
      .post(`/api/studies/${studyId}/uploads`)
      .set('x-csrf-token', reviewerToken)
      .attach('file', await goodWorkbook(), 'x.xlsx');
    expect(refused.status).toBe(403);
    const noToken = await analyst
      .post(`/api/studies/${studyId}/uploads`)
      .attach('file', await goodWorkbook(), 'x.xlsx');
    expect(noToken.status).toBe(403);
    const unknown = await analyst
      .post('/api/studies/999999999/uploads')
      .set('x-csrf-token', token)
      .attach('file', await goodWorkbook(), 'x.xlsx');
    expect(unknown.status).toBe(404);
  });

  it('a malformed multipart body → 400, not a 500', async () => {
    const response = await analyst
      .post(`/api/studies/${studyId}/uploads`)
      .set('x-csrf-token', token)
      .set('content-type', 'multipart/form-data; boundary=xyz')
      .send(
        '--xyz\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\n\r\nMonth,Assay\r\n0,1',
      );
    expect(response.status).toBe(400);
    expect(response.body.error.message).toMatch(/could not be read/);
  });
});
