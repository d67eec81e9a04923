/**
 * The service's own check of a signed PDF, independent of the code that signs:
 * a small DER reader of its own and node:crypto.
 *
 * 1. Find the last signature dictionary's /ByteRange [a b c d] and its /Contents <hex>.
 * 2. Recompute SHA-256 over bytes [a, a+b) and [c, c+d) and compare it with the CMS
 *    messageDigest signed attribute.
 * 3. Verify the RSA (PKCS#1 v1.5) signature over the DER of the signed attributes
 *    (encoded as a SET, RFC 5652 §5.4) with the public key of the certificate that
 *    the SignerInfo names (issuer and serial number).
 * 4. Say whether the signed ranges cover the whole file except the /Contents value.
 *
 * A PDF that cannot be read gives `signatureValid: false` with the reason in
 * `problems`; nothing throws for bad input.
 */
import { createHash, verify as rsaVerify, X509Certificate } from 'node:crypto';

export interface SignatureCheck {
  /** The signature verifies and the digest matches the signed ranges. */
  readonly signatureValid: boolean;
  readonly digestMatches: boolean;
  /** Signed ranges start at 0 and reach the end of the file, leaving out only the /Contents value. */
  readonly coversWholeFile: boolean;
  readonly signerSubject: string | null;
  readonly signingTime: string | null;
  readonly byteRange: readonly number[] | null;
  readonly subFilter: string | null;
  readonly problems: readonly string[];
}

// ---------------------------------------------------------------------------
// DER reader

interface Node {
  readonly tag: number;
  /** Offset of the tag byte in the buffer. */
  readonly start: number;
  /** Offset of the first content byte. */
  readonly contentStart: number;
  /** Offset after the last content byte. */
  readonly end: number;
  readonly constructed: boolean;
}

function readNode(buf: Buffer, at: number): Node {
  if (at + 2 > buf.length) throw new Error('DER: truncated');
  const tag = buf[at]!;
  if ((tag & 0x1f) === 0x1f) throw new Error('DER: multi-byte tags are not used in CMS');
  let len = buf[at + 1]!;
  let p = at + 2;
  if (len & 0x80) {
    const n = len & 0x7f;
    if (n === 0 || n > 4) throw new Error('DER: indefinite or oversized length');
    len = 0;
    for (let i = 0; i < n; i++) len = len * 256 + buf[p + i]!;
    p += n;
  }
  const end = p + len;
  if (end > buf.length) throw new Error('DER: length runs past the end');
  return { tag, start: at, contentStart: p, end, constructed: (tag & 0x20) !== 0 };
}

function children(buf: Buffer, node: Node): Node[] {
  const out: Node[] = [];
  let p = node.contentStart;
  while (p < node.end) {
    const child = readNode(buf, p);
    out.push(child);
    p = child.end;
  }
  return out;
}

function expect(node: Node | undefined, tag: number, what: string): Node {
  if (!node || node.tag !== tag) throw new Error(`CMS: expected ${what}`);
  return node;
}

function oidText(buf: Buffer, node: Node): string {
  const bytes = buf.subarray(node.contentStart, node.end);
  const parts: number[] = [];
  let value = 0;
  for (const byte of bytes) {
    value = value * 128 + (byte & 0x7f);
    if ((byte & 0x80) === 0) {
      parts.push(value);
      value = 0;
    }
  }
  const first = parts.shift() ?? 0;
  const a = first < 80 ? Math.floor(first / 40) : 2;
  return [a, first - a * 40, ...parts].join('.');
}

function asn1Time(buf: Buffer, node: Node): string {
  const s = buf.subarray(node.contentStart, node.end).toString('latin1');
  const m = node.tag === 0x17 ? /^(\d{2})(\d{2})(\d{2})(\d{2})(\d{2})(\d{2})Z$/.exec(s) : /^(\d{4})(\d{2})(\d{2})(\d{2})(\d{2})(\d{2})Z$/.exec(s);
  if (!m) throw new Error(`CMS: unreadable time "${s}"`);
  let year = Number(m[1]);
  if (node.tag === 0x17) year += year < 50 ? 2000 : 1900;
  return `${String(year).padStart(4, '0')}-${m[2]}-${m[3]}T${m[4]}:${m[5]}:${m[6]}Z`;
}

// ---------------------------------------------------------------------------
// PDF scanning

interface Located {
  readonly byteRange: [number, number, number, number];
  readonly contents: Buffer;
  readonly contentsStart: number;
  readonly contentsEnd: number;
  readonly subFilter: string | null;
}

function locate(pdf: Buffer): Located {
  const text = pdf.toString('latin1');
  const re = /\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/g;
  let match: RegExpExecArray | null;
  let last: RegExpExecArray | null = null;
  while ((match = re.exec(text)) !== null) last = match;
  if (!last) throw new Error('no signature: the PDF has no /ByteRange');
  const byteRange = [Number(last[1]), Number(last[2]), Number(last[3]), Number(last[4])] as [number, number, number, number];
  const [a, b, c, d] = byteRange;
  if (a + b > c || c + d > pdf.length) throw new Error(`the /ByteRange [${byteRange.join(' ')}] does not fit the file of ${pdf.length} bytes`);
  // the /Contents value is the hex string in the gap between the two ranges
  const gap = text.slice(a + b, c);
  const hex = /^<([0-9A-Fa-f\s]*)>$/.exec(gap);
  if (!hex) throw new Error('the gap between the signed ranges is not the /Contents hex string');
  const contents = Buffer.from(hex[1]!.replace(/\s+/g, ''), 'hex');
  // the signature dictionary around it: look back and ahead for /SubFilter
  const dictStart = text.lastIndexOf('<<', Math.min(last.index, a + b));
  const dictEnd = text.indexOf('>>', c);
  const dict = text.slice(Math.max(0, dictStart), dictEnd > 0 ? dictEnd : c);
  const sub = /\/SubFilter\s*\/([A-Za-z0-9.#_-]+)/.exec(dict);
  return { byteRange, contents, contentsStart: a + b, contentsEnd: c, subFilter: sub ? sub[1]! : null };
}

// ---------------------------------------------------------------------------
// CMS

interface ParsedCms {
  readonly signedAttrs: Buffer; // re-tagged as SET
  readonly messageDigest: Buffer | null;
  readonly signingTime: string | null;
  readonly signature: Buffer;
  readonly digestOid: string;
  readonly certificate: X509Certificate | null;
  readonly problems: string[];
}

const OID_SIGNED_DATA = '1.2.840.113549.1.7.2';
const OID_MESSAGE_DIGEST = '1.2.840.113549.1.9.4';
const OID_SIGNING_TIME = '1.2.840.113549.1.9.5';
const OID_CONTENT_TYPE = '1.2.840.113549.1.9.3';
const DIGESTS: Readonly<Record<string, string>> = {
  '2.16.840.1.101.3.4.2.1': 'sha256',
  '2.16.840.1.101.3.4.2.2': 'sha384',
  '2.16.840.1.101.3.4.2.3': 'sha512',
  '1.3.14.3.2.26': 'sha1',
};

function parseCms(buf: Buffer): ParsedCms {
  const problems: string[] = [];
  const root = expect(readNode(buf, 0), 0x30, 'ContentInfo SEQUENCE');
  const [typeNode, explicit] = children(buf, root);
  if (oidText(buf, expect(typeNode, 0x06, 'content type OID')) !== OID_SIGNED_DATA) throw new Error('CMS: not SignedData');
  const sd = expect(children(buf, expect(explicit, 0xa0, '[0] content'))[0], 0x30, 'SignedData');
  const sdItems = children(buf, sd);
  let certificates: X509Certificate[] = [];
  const certNode = sdItems.find((n) => n.tag === 0xa0);
  if (certNode) {
    certificates = children(buf, certNode)
      .filter((n) => n.tag === 0x30)
      .map((n) => {
        try {
          return new X509Certificate(buf.subarray(n.start, n.end));
        } catch (e) {
          throw new Error(`a certificate in it is not a readable X.509 certificate: ${e instanceof Error ? e.message : String(e)}`);
        }
      });
  }
  const signerInfos = expect(sdItems[sdItems.length - 1], 0x31, 'signerInfos SET');
  const infos = children(buf, signerInfos);
  if (infos.length !== 1) problems.push(`expected one SignerInfo, found ${infos.length}`);
  const si = children(buf, expect(infos[0], 0x30, 'SignerInfo'));
  const sid = expect(si[1], 0x30, 'IssuerAndSerialNumber');
  const [, serialNode] = children(buf, sid);
  const serialHex = buf
    .subarray(serialNode!.contentStart, serialNode!.end)
    .toString('hex')
    .replace(/^(00)+(?=.)/, '')
    .toUpperCase();
  const digestOid = oidText(buf, expect(children(buf, expect(si[2], 0x30, 'digestAlgorithm'))[0], 0x06, 'digest OID'));
  const attrsNode = expect(si[3], 0xa0, 'signed attributes [0]');
  const signedAttrs = Buffer.from(buf.subarray(attrsNode.start, attrsNode.end));
  signedAttrs[0] = 0x31; // RFC 5652 §5.4: the signature covers the attributes as a SET OF
  let messageDigest: Buffer | null = null;
  let signingTime: string | null = null;
  let contentType = false;
  for (const attr of children(buf, attrsNode)) {
    const [t, values] = children(buf, attr);
    const type = oidText(buf, t!);
    const value = children(buf, values!)[0];
    if (!value) continue;
    if (type === OID_MESSAGE_DIGEST) messageDigest = Buffer.from(buf.subarray(value.contentStart, value.end));
    else if (type === OID_SIGNING_TIME) signingTime = asn1Time(buf, value);
    else if (type === OID_CONTENT_TYPE) contentType = true;
  }
  if (!contentType) problems.push('the signed attributes have no content type');
  if (!messageDigest) problems.push('the signed attributes have no message digest');
  const sigNode = expect(si[5], 0x04, 'signature OCTET STRING');
  const signature = Buffer.from(buf.subarray(sigNode.contentStart, sigNode.end));
  const certificate = certificates.find((c) => c.serialNumber.replace(/^(00)+(?=.)/, '').toUpperCase() === serialHex) ?? null;
  if (!certificate) problems.push('the certificate named by the SignerInfo is not in the signature');
  return { signedAttrs, messageDigest, signingTime, signature, digestOid, certificate, problems };
}

/**
 * The CMS SignedData in a /Contents value. Whatever fails to parse in it (the DER structure, a
 * certificate inside it) is reported as corrupt signature data, in the service's words; the
 * parser's or the library's own message follows as a detail.
 */
function readCms(contents: Buffer): ParsedCms {
  try {
    const der = contents.subarray(0, readNode(contents, 0).end);
    return parseCms(der);
  } catch (e) {
    const why = e instanceof Error ? e.message : String(e);
    throw new Error(`the signature data (the CMS SignedData in /Contents) is corrupt or unreadable, so the signature cannot be checked (detail: ${why})`);
  }
}

/** Check the (last) signature of a PDF. */
export function verifySignedPdf(pdf: Buffer): SignatureCheck {
  const problems: string[] = [];
  let byteRange: number[] | null = null;
  let subFilter: string | null = null;
  try {
    const loc = locate(pdf);
    byteRange = [...loc.byteRange];
    subFilter = loc.subFilter;
    const [a, b, c, d] = loc.byteRange;
    const coversWholeFile = a === 0 && c + d === pdf.length && loc.contentsStart === b && loc.contentsEnd === c;
    if (!coversWholeFile) problems.push('the signed ranges do not cover the whole file');
    const cms = readCms(loc.contents);
    problems.push(...cms.problems);
    const algorithm = DIGESTS[cms.digestOid];
    if (!algorithm) throw new Error(`unsupported digest algorithm ${cms.digestOid}`);
    const digest = createHash(algorithm).update(pdf.subarray(a, a + b)).update(pdf.subarray(c, c + d)).digest();
    const digestMatches = cms.messageDigest !== null && digest.equals(cms.messageDigest);
    if (!digestMatches) problems.push('the digest of the signed ranges does not match the signed message digest: the file was changed after signing');
    let signatureOk = false;
    if (cms.certificate) {
      signatureOk = rsaVerify(algorithm, cms.signedAttrs, cms.certificate.publicKey, cms.signature);
      if (!signatureOk) problems.push('the signature over the signed attributes does not verify with the certificate');
    }
    return {
      signatureValid: signatureOk && digestMatches,
      digestMatches,
      coversWholeFile,
      signerSubject: cms.certificate ? cms.certificate.subject.split('\n').filter(Boolean).join(', ') : null,
      signingTime: cms.signingTime,
      byteRange,
      subFilter,
      problems,
    };
  } catch (e) {
    problems.push(e instanceof Error ? e.message : String(e));
    return {
      signatureValid: false,
      digestMatches: false,
      coversWholeFile: false,
      signerSubject: null,
      signingTime: null,
      byteRange,
      subFilter,
      problems,
    };
  }
}
