import {
  PDFArray,
  type PDFContext,
  PDFDict,
  PDFDocument,
  PDFHexString,
  PDFName,
  PDFNumber,
  type PDFObject,
  PDFRef,
  PDFString,
} from 'pdf-lib';
import { PdfSealError } from './pdf-seal-error.ts';

/**
 * Appends an empty signature to a PDF as an **incremental update** (ISO 32000-1 §7.5.6): the
 * original bytes stay exactly as they were, and after them come a signature dictionary with a
 * zero-filled /Contents of `signatureLength` bytes and a /ByteRange placeholder (filled in by
 * `SignPdf.sign`), an invisible signature widget on the first page (Rect [0 0 0 0], so nothing
 * visible changes), the updated page (or its /Annots array), the updated catalog (or its
 * /AcroForm) with SigFlags 3 (signatures exist, append only), a cross-reference section for
 * just these objects and a trailer whose /Prev points to the previous one. Because nothing is
 * rewritten, the document information dictionary, XMP metadata, tags and outline are untouched,
 * and an earlier signature stays valid when another is added.
 *
 * pdf-lib is used only to read the file's objects (whatever its cross-reference format); the
 * changed objects are serialised here. Text entries (/Name, /Reason, /Location, /ContactInfo)
 * are written as UTF-16BE strings so any name prints correctly; /M is the signing time in UTC.
 *
 * Reference: ISO 32000-1:2008 §7.5.6 (incremental updates), §12.7.4.5 (signature fields),
 * §12.8.1 table 252 (signature dictionary); ETSI EN 319 142-1 §5.2 (PAdES signature dictionary).
 *
 * Throws PdfSealError: 'not-pdf' (no %PDF header or no startxref), 'encrypted', 'no-pages',
 * 'unreadable' (pdf-lib cannot parse it).
 *
 * Example: await addSignaturePlaceholder(pdf, { reason: 'Approved', name: 'A. Reviewer',
 * location: 'QC lab', contactInfo: '', signingTime: new Date(), signatureLength: 16384 }) →
 * the original bytes followed by one update section.
 */

export interface SignaturePlaceholderOptions {
  reason: string;
  name: string;
  location: string;
  contactInfo: string;
  signingTime: Date;
  /** Bytes reserved for the CMS signature (written as twice as many hex digits). */
  signatureLength: number;
  subFilter?: string;
}

export const BYTE_RANGE_PLACEHOLDER = '**********';
const HEADER_SEARCH_BYTES = 1024;
const TAIL_SEARCH_BYTES = 4096;

function previousCrossReference(pdf: Buffer): { offset: number; size: number } {
  const tail = pdf.subarray(Math.max(0, pdf.length - TAIL_SEARCH_BYTES)).toString('latin1');
  const startxref = [...tail.matchAll(/startxref\s+(\d+)/g)].at(-1);
  if (!startxref?.[1])
    throw new PdfSealError('not-pdf', 'The file has no "startxref": it is not a complete PDF.');
  const sizes = [...tail.matchAll(/\/Size\s+(\d+)/g)].map((match) => Number(match[1]));
  return { offset: Number(startxref[1]), size: Math.max(0, ...sizes) };
}

async function loadDocument(pdf: Buffer): Promise<PDFDocument> {
  if (!pdf.subarray(0, HEADER_SEARCH_BYTES).includes('%PDF-')) {
    throw new PdfSealError('not-pdf', 'The file is not a PDF (no "%PDF-" header).');
  }
  try {
    return await PDFDocument.load(pdf, { updateMetadata: false });
  } catch (error) {
    if ((error as Error).name === 'EncryptedPDFError') {
      throw new PdfSealError('encrypted', 'The PDF is encrypted; an encrypted PDF cannot be sealed.', {
        cause: error,
      });
    }
    throw new PdfSealError('unreadable', `The PDF cannot be read: ${(error as Error).message}`, {
      cause: error,
    });
  }
}

/**
 * Returns the array stored under `key` in `holder` (inline or indirect), marking as changed
 * whichever indirect object will hold the new entry: the array itself, or `owner` — the
 * indirect object that contains `holder` (holder itself, or e.g. the catalog of an inline
 * AcroForm dictionary).
 */
function arrayForUpdate(
  context: PDFContext,
  holder: PDFDict,
  owner: [PDFRef, PDFObject],
  key: string,
  changed: Map<PDFRef, PDFObject>,
): PDFArray {
  const raw = holder.get(PDFName.of(key));
  if (raw instanceof PDFRef) {
    const array = context.lookup(raw);
    if (array instanceof PDFArray) {
      changed.set(raw, array);
      return array;
    }
  }
  changed.set(...owner);
  if (raw instanceof PDFArray) return raw;
  const array = context.obj([]);
  holder.set(PDFName.of(key), array);
  return array;
}

function serialise(object: PDFObject): Buffer {
  const bytes = new Uint8Array(object.sizeInBytes());
  object.copyBytesInto(bytes, 0);
  return Buffer.from(bytes);
}

export async function addSignaturePlaceholder(
  pdf: Buffer,
  options: SignaturePlaceholderOptions,
): Promise<Buffer> {
  const document = await loadDocument(pdf);
  const previous = previousCrossReference(pdf);
  const { context } = document;
  const rootRef = context.trailerInfo.Root;
  if (!(rootRef instanceof PDFRef)) throw new PdfSealError('unreadable', 'The PDF has no document catalog.');
  if (document.getPageCount() === 0) throw new PdfSealError('no-pages', 'The PDF has no pages.');
  const page = document.getPage(0);
  const catalog = document.catalog;

  let nextObjectNumber = Math.max(context.largestObjectNumber + 1, previous.size);
  const allocate = () => PDFRef.of(nextObjectNumber++, 0);
  const changed = new Map<PDFRef, PDFObject>();

  const byteRange = context.obj([0, ...Array(3).fill(PDFName.of(BYTE_RANGE_PLACEHOLDER))]);
  const signatureRef = allocate();
  changed.set(
    signatureRef,
    context.obj({
      Type: 'Sig',
      Filter: 'Adobe.PPKLite',
      SubFilter: options.subFilter ?? 'ETSI.CAdES.detached',
      ByteRange: byteRange, // must precede /Contents: SignPdf looks for /Contents after it
      Contents: PDFHexString.of('0'.repeat(options.signatureLength * 2)),
      M: PDFString.fromDate(options.signingTime),
      Name: PDFHexString.fromText(options.name),
      Reason: PDFHexString.fromText(options.reason),
      Location: PDFHexString.fromText(options.location),
      ContactInfo: PDFHexString.fromText(options.contactInfo),
      Prop_Build: { Filter: { Name: 'Adobe.PPKLite' }, App: { Name: 'Rateledger' } },
    }),
  );
  const appearanceRef = allocate();
  changed.set(appearanceRef, context.formXObject([], { BBox: [0, 0, 0, 0], Resources: {} }));

  const acroFormRaw = catalog.get(PDFName.of('AcroForm'));
  let acroForm: PDFDict;
  let acroFormOwner: [PDFRef, PDFObject];
  if (acroFormRaw instanceof PDFRef && context.lookup(acroFormRaw) instanceof PDFDict) {
    acroForm = context.lookup(acroFormRaw) as PDFDict;
    acroFormOwner = [acroFormRaw, acroForm];
  } else {
    acroForm = acroFormRaw instanceof PDFDict ? acroFormRaw : context.obj({});
    catalog.set(PDFName.of('AcroForm'), acroForm);
    acroFormOwner = [rootRef, catalog];
  }
  changed.set(...acroFormOwner);
  const fields = arrayForUpdate(context, acroForm, acroFormOwner, 'Fields', changed);
  const flags = acroForm.get(PDFName.of('SigFlags'));
  acroForm.set(PDFName.of('SigFlags'), PDFNumber.of((flags instanceof PDFNumber ? flags.asNumber() : 0) | 3));

  const widgetRef = allocate();
  changed.set(
    widgetRef,
    context.obj({
      Type: 'Annot',
      Subtype: 'Widget',
      FT: 'Sig',
      Rect: [0, 0, 0, 0],
      V: signatureRef,
      T: PDFString.of(`Rateledger seal ${fields.size() + 1}`),
      F: 4 | 128, // print, locked (ISO 32000-1 table 165)
      P: page.ref,
      AP: { N: appearanceRef },
    }),
  );
  fields.push(widgetRef);
  arrayForUpdate(context, page.node, [page.ref, page.node], 'Annots', changed).push(widgetRef);

  const trailer = context.obj({ Size: nextObjectNumber, Root: rootRef, Prev: previous.offset });
  if (context.trailerInfo.Info) trailer.set(PDFName.of('Info'), context.trailerInfo.Info as PDFObject);
  if (context.trailerInfo.ID) trailer.set(PDFName.of('ID'), context.trailerInfo.ID as PDFObject);
  return Buffer.concat(updateSection(pdf, changed, trailer));
}

function updateSection(pdf: Buffer, changed: Map<PDFRef, PDFObject>, trailer: PDFDict): Buffer[] {
  const parts: Buffer[] = [pdf];
  let offset = pdf.length;
  const push = (part: Buffer | string) => {
    const bytes = typeof part === 'string' ? Buffer.from(part, 'latin1') : part;
    parts.push(bytes);
    offset += bytes.length;
  };
  if (pdf.at(-1) !== 0x0a && pdf.at(-1) !== 0x0d) push('\n');
  const entries = [...changed].sort(([a], [b]) => a.objectNumber - b.objectNumber);
  const offsets: { ref: PDFRef; offset: number }[] = [];
  for (const [ref, object] of entries) {
    offsets.push({ ref, offset });
    push(`${ref.objectNumber} ${ref.generationNumber} obj\n`);
    push(serialise(object));
    push('\nendobj\n');
  }
  const crossReference = offset;
  let table = 'xref\n';
  for (let start = 0; start < offsets.length; ) {
    let end = start + 1;
    while (
      end < offsets.length &&
      offsets[end]?.ref.objectNumber === (offsets[end - 1]?.ref.objectNumber ?? 0) + 1
    )
      end++;
    table += `${offsets[start]?.ref.objectNumber} ${end - start}\n`;
    for (const entry of offsets.slice(start, end)) {
      table += `${String(entry.offset).padStart(10, '0')} ${String(entry.ref.generationNumber).padStart(5, '0')} n\r\n`;
    }
    start = end;
  }
  push(table);
  push(`trailer\n${serialise(trailer).toString('latin1')}\nstartxref\n${crossReference}\n%%EOF\n`);
  return parts;
}
