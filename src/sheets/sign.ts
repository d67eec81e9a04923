/**
 * PDF signatures for the sheets: ISO 32000 CMS/PKCS#7 detached (`adbe.pkcs7.detached`),
 * placed with @signpdf/placeholder-pdfkit and written with @signpdf/signpdf.
 *
 * `SheetSigner` is our own @signpdf Signer: the PKCS#12 is parsed once (node-forge)
 * when the signer is made (a stock P12Signer re-parses it on every call and fails on
 * the second), the CMS SignedData is assembled with node-forge's ASN.1 (signed
 * attributes: content type, signing time, message digest; SHA-256), and the RSA
 * PKCS#1 v1.5 step runs in node:crypto (deterministic: the same bytes and time give
 * the same signature).
 */
import { createPrivateKey, createHash, generateKeyPairSync, randomBytes, sign as rsaSign, X509Certificate, type KeyObject } from 'node:crypto';
import forge from 'node-forge';
import { SignPdf } from '@signpdf/signpdf';
import { Signer } from '@signpdf/utils';
import { DomainError } from '../core/errors.js';
import { renderSheet, type PlaceholderOptions } from './pdf.js';
import { withSignedBy, type SheetDocument } from './model.js';

const { asn1, pki } = forge;
type Asn1 = forge.asn1.Asn1;

export const DEMO_LABEL = 'DEMO — NOT FOR REGULATORY USE';

const OID = {
  data: '1.2.840.113549.1.7.1',
  signedData: '1.2.840.113549.1.7.2',
  contentType: '1.2.840.113549.1.9.3',
  messageDigest: '1.2.840.113549.1.9.4',
  signingTime: '1.2.840.113549.1.9.5',
  sha256: '2.16.840.1.101.3.4.2.1',
  rsaEncryption: '1.2.840.113549.1.1.1',
  title: '2.5.4.12',
} as const;

export interface SignerIdentity {
  /** Printed name of the signer (the certificate's common name unless given). */
  readonly name: string;
  readonly role: string;
  readonly organisation?: string;
  /** Certificate subject as one line, e.g. "CN=…, OU=…, O=…". */
  readonly certificateSubject: string;
  readonly certificateIssuer: string;
  readonly serialNumber: string;
  /** SHA-256 of the certificate DER, hex. */
  readonly certificateSha256: string;
  readonly notBefore: Date;
  readonly notAfter: Date;
  /** The certificate says it is a demo certificate. */
  readonly demo: boolean;
}

// ---------------------------------------------------------------------------
// ASN.1 helpers (node-forge)

const seq = (items: Asn1[]): Asn1 => asn1.create(asn1.Class.UNIVERSAL, asn1.Type.SEQUENCE, true, items);
const set = (items: Asn1[]): Asn1 => asn1.create(asn1.Class.UNIVERSAL, asn1.Type.SET, true, items);
const oid = (o: string): Asn1 => asn1.create(asn1.Class.UNIVERSAL, asn1.Type.OID, false, asn1.oidToDer(o).getBytes());
const nul = (): Asn1 => asn1.create(asn1.Class.UNIVERSAL, asn1.Type.NULL, false, '');
const int = (n: number): Asn1 => asn1.create(asn1.Class.UNIVERSAL, asn1.Type.INTEGER, false, asn1.integerToDer(n).getBytes());
const octets = (bytes: Buffer): Asn1 => asn1.create(asn1.Class.UNIVERSAL, asn1.Type.OCTETSTRING, false, bytes.toString('binary'));
const ctx = (tag: number, items: Asn1[]): Asn1 => asn1.create(asn1.Class.CONTEXT_SPECIFIC, tag, true, items);
const der = (node: Asn1): string => asn1.toDer(node).getBytes();

function time(date: Date): Asn1 {
  // RFC 5652 §11.3: UTCTime for 1950–2049, GeneralizedTime otherwise
  const year = date.getUTCFullYear();
  return year >= 1950 && year < 2050
    ? asn1.create(asn1.Class.UNIVERSAL, asn1.Type.UTCTIME, false, asn1.dateToUtcTime(date))
    : asn1.create(asn1.Class.UNIVERSAL, asn1.Type.GENERALIZEDTIME, false, asn1.dateToGeneralizedTime(date));
}

const attribute = (type: string, value: Asn1): Asn1 => seq([oid(type), set([value])]);

function invalid(detail: string, pointer = '/p12'): DomainError {
  return new DomainError('SIGNER_INVALID', { detail, fields: [{ pointer, message: detail }] });
}

function subjectLine(x509: X509Certificate, which: 'subject' | 'issuer'): string {
  return x509[which].split('\n').filter((s) => s.length > 0).join(', ');
}

function attributeOf(x509: X509Certificate, key: string): string | undefined {
  for (const line of x509.subject.split('\n')) {
    const eq = line.indexOf('=');
    if (eq > 0 && line.slice(0, eq) === key) return line.slice(eq + 1);
  }
  return undefined;
}

// ---------------------------------------------------------------------------
// The signer

export class SheetSigner extends Signer {
  readonly identity: SignerIdentity;
  private readonly privateKey: KeyObject;
  private readonly certificates: Asn1[];
  private readonly issuer: Asn1;
  private readonly serial: Asn1;
  /** Bytes to reserve in the PDF for this signer's CMS (certificates, signature, attributes). */
  readonly signatureLength: number;

  /** Use loadSigner or createDemoSigner. */
  constructor(args: { key: forge.pki.rsa.PrivateKey; certificate: forge.pki.Certificate; chain: forge.pki.Certificate[]; name?: string; role?: string }) {
    super();
    const certAsn1 = pki.certificateToAsn1(args.certificate);
    const certDer = Buffer.from(der(certAsn1), 'binary');
    const x509 = new X509Certificate(certDer);
    this.privateKey = createPrivateKey(pki.privateKeyToPem(args.key));
    // TBSCertificate: [0] version, serialNumber, signature, issuer, …
    const tbs = (certAsn1.value as Asn1[])[0]!;
    const fields = tbs.value as Asn1[];
    const offset = fields[0]!.tagClass === asn1.Class.CONTEXT_SPECIFIC ? 1 : 0;
    this.serial = fields[offset]!;
    this.issuer = fields[offset + 2]!;
    this.certificates = [certAsn1, ...args.chain.map((c) => pki.certificateToAsn1(c))];
    const certBytes = this.certificates.reduce((sum, c) => sum + der(c).length, 0);
    const modulusBytes = Math.ceil(args.key.n.bitLength() / 8);
    // issuer name and serial repeat in the SignerInfo; 1 KiB covers the rest of the structure
    this.signatureLength = Math.ceil((certBytes + modulusBytes + der(this.issuer).length + 1024) / 512) * 512;
    const cn = attributeOf(x509, 'CN') ?? 'unnamed signer';
    const organisation = attributeOf(x509, 'O');
    const subject = subjectLine(x509, 'subject');
    this.identity = {
      name: args.name ?? cn,
      role: args.role ?? attributeOf(x509, 'title') ?? 'signer',
      ...(organisation !== undefined ? { organisation } : {}),
      certificateSubject: subject,
      certificateIssuer: subjectLine(x509, 'issuer'),
      serialNumber: x509.serialNumber,
      certificateSha256: createHash('sha256').update(certDer).digest('hex'),
      notBefore: new Date(x509.validFrom),
      notAfter: new Date(x509.validTo),
      demo: subject.includes('DEMO'),
    };
  }

  /** The CMS SignedData (DER) over `content`, detached. */
  cms(content: Buffer, signingTime: Date): Buffer {
    if (signingTime < this.identity.notBefore || signingTime > this.identity.notAfter) {
      throw new DomainError('SIGNER_INVALID', {
        detail:
          `The certificate of ${this.identity.name} is valid from ${this.identity.notBefore.toISOString()} ` +
          `to ${this.identity.notAfter.toISOString()}; it cannot sign at ${signingTime.toISOString()}. Import a current certificate.`,
        params: { signingTime: signingTime.toISOString() },
      });
    }
    const digest = createHash('sha256').update(content).digest();
    // DER orders a SET OF by the encodings of its members (X.690 §11.6)
    const attrs = [
      attribute(OID.contentType, oid(OID.data)),
      attribute(OID.signingTime, time(signingTime)),
      attribute(OID.messageDigest, octets(digest)),
    ]
      .map((a) => ({ a, d: der(a) }))
      .sort((x, y) => (x.d < y.d ? -1 : x.d > y.d ? 1 : 0))
      .map((x) => x.a);
    // the signature covers the attributes encoded as a SET (RFC 5652 §5.4)
    const toSign = Buffer.from(der(set(attrs)), 'binary');
    const signature = rsaSign('sha256', toSign, this.privateKey);
    const sha256Alg = seq([oid(OID.sha256), nul()]);
    const signerInfo = seq([
      int(1),
      seq([this.issuer, this.serial]),
      sha256Alg,
      ctx(0, attrs),
      seq([oid(OID.rsaEncryption), nul()]),
      octets(signature),
    ]);
    const signedData = seq([
      int(1),
      set([seq([oid(OID.sha256), nul()])]),
      seq([oid(OID.data)]),
      ctx(0, this.certificates),
      set([signerInfo]),
    ]);
    const contentInfo = seq([oid(OID.signedData), ctx(0, [signedData])]);
    return Buffer.from(der(contentInfo), 'binary');
  }

  /** @signpdf Signer: the CMS over the PDF's signed byte ranges. */
  override async sign(pdfBuffer: Buffer, signingTime?: Date): Promise<Buffer> {
    return this.cms(pdfBuffer, signingTime ?? new Date());
  }
}

// ---------------------------------------------------------------------------
// Loading and creating signers

/**
 * A signer from a PKCS#12 file (.p12/.pfx) and its password. The file must hold an
 * RSA private key and the certificate that matches it (other certificates are kept as
 * the chain). `name`/`role` override what the certificate says.
 */
export function loadSigner(p12: Buffer, password: string, options: { name?: string; role?: string } = {}): SheetSigner {
  let parsed: forge.pkcs12.Pkcs12Pfx;
  try {
    const p12Asn1 = asn1.fromDer(forge.util.createBuffer(p12.toString('binary')), false);
    parsed = forge.pkcs12.pkcs12FromAsn1(p12Asn1, false, password);
  } catch (e) {
    const why = e instanceof Error && /MAC|password/i.test(e.message) ? 'the password is wrong' : 'it is not a readable PKCS#12 file or the password is wrong';
    throw invalid(`The PKCS#12 file cannot be opened: ${why}. Give the .p12/.pfx exported with its private key and the password set at export.`);
  }
  const keyBags = [
    ...(parsed.getBags({ bagType: pki.oids.pkcs8ShroudedKeyBag! })[pki.oids.pkcs8ShroudedKeyBag!] ?? []),
    ...(parsed.getBags({ bagType: pki.oids.keyBag! })[pki.oids.keyBag!] ?? []),
  ];
  const certBags = parsed.getBags({ bagType: pki.oids.certBag! })[pki.oids.certBag!] ?? [];
  const key = keyBags.map((b) => b.key).find((k): k is forge.pki.rsa.PrivateKey => !!k && 'n' in k);
  if (!key) {
    throw invalid(
      keyBags.length === 0
        ? 'The PKCS#12 file holds no private key. Export the certificate together with its private key.'
        : 'The private key in the PKCS#12 file is not an RSA key; only RSA keys are supported.',
    );
  }
  const certs = certBags.map((b) => b.cert).filter((c): c is forge.pki.Certificate => !!c);
  const matches = (c: forge.pki.Certificate): boolean => {
    const pub = c.publicKey as forge.pki.rsa.PublicKey;
    return !!pub.n && pub.n.equals(key.n) && pub.e.equals(key.e);
  };
  const certificate = certs.find(matches);
  if (!certificate) {
    throw invalid(
      certs.length === 0
        ? 'The PKCS#12 file holds no X.509 certificate. Export the certificate together with its private key.'
        : 'No certificate in the PKCS#12 file matches its private key.',
    );
  }
  return new SheetSigner({ key, certificate, chain: certs.filter((c) => c !== certificate), ...options });
}

export interface DemoSignerInput {
  readonly name: string;
  readonly role: string;
  readonly organisation: string;
  /** Password of the PKCS#12 (default: 24 random bytes, base64url). */
  readonly password?: string;
  /** Start of validity (default: now minus one day). */
  readonly notBefore?: Date;
  /** Years of validity (default 10). */
  readonly validityYears?: number;
}

export interface DemoSigner {
  readonly p12: Buffer;
  readonly password: string;
  readonly signer: SheetSigner;
}

/**
 * A self-signed RSA-2048 certificate and key as a password-protected PKCS#12 (AES-256),
 * its subject labelled "DEMO — NOT FOR REGULATORY USE", and the signer made from it.
 * The key pair comes from node:crypto (fast); the certificate and the PKCS#12 from node-forge.
 */
export function createDemoSigner(input: DemoSignerInput): DemoSigner {
  if (input.name.trim() === '' || input.role.trim() === '' || input.organisation.trim() === '') {
    const missing = (['name', 'role', 'organisation'] as const).filter((k) => input[k].trim() === '');
    throw new DomainError('VALIDATION_FAILED', {
      detail: `A demo signer needs a name, a role and an organisation; missing: ${missing.join(', ')}.`,
      fields: missing.map((k) => ({ pointer: `/${k}`, message: 'must not be empty' })),
    });
  }
  const password = input.password ?? randomBytes(24).toString('base64url');
  const { privateKey: pem } = generateKeyPairSync('rsa', {
    modulusLength: 2048,
    publicExponent: 0x10001,
    privateKeyEncoding: { type: 'pkcs1', format: 'pem' },
    publicKeyEncoding: { type: 'spki', format: 'pem' },
  });
  const key = pki.privateKeyFromPem(pem) as forge.pki.rsa.PrivateKey;
  const cert = pki.createCertificate();
  cert.publicKey = pki.setRsaPublicKey(key.n, key.e);
  const serial = randomBytes(16);
  serial[0] = serial[0]! & 0x7f | 0x10; // positive, 16 bytes
  cert.serialNumber = serial.toString('hex');
  const notBefore = input.notBefore ?? new Date(Date.now() - 24 * 3600 * 1000);
  const notAfter = new Date(notBefore);
  notAfter.setUTCFullYear(notAfter.getUTCFullYear() + (input.validityYears ?? 10));
  cert.validity.notBefore = notBefore;
  cert.validity.notAfter = notAfter;
  const utf8 = asn1.Type.UTF8;
  const cn = `${input.name.trim()} (DEMO)`.slice(0, 64);
  const attrs = [
    { type: pki.oids.commonName!, value: cn, valueTagClass: utf8 },
    { type: OID.title, value: input.role.trim().slice(0, 64), valueTagClass: utf8 },
    { type: pki.oids.organizationalUnitName!, value: DEMO_LABEL, valueTagClass: utf8 },
    { type: pki.oids.organizationName!, value: input.organisation.trim().slice(0, 64), valueTagClass: utf8 },
  ] as unknown as forge.pki.CertificateField[];
  cert.setSubject(attrs);
  cert.setIssuer(attrs);
  cert.setExtensions([
    { name: 'basicConstraints', cA: false, critical: true },
    { name: 'keyUsage', digitalSignature: true, nonRepudiation: true, critical: true },
    { name: 'subjectKeyIdentifier' },
  ]);
  cert.sign(key, forge.md.sha256.create());
  const p12Asn1 = forge.pkcs12.toPkcs12Asn1(key, [cert], password, {
    algorithm: 'aes256',
    friendlyName: `${input.name.trim()} (demo signer)`,
  });
  const p12 = Buffer.from(der(p12Asn1), 'binary');
  return { p12, password, signer: loadSigner(p12, password, { name: input.name.trim(), role: input.role.trim() }) };
}

// ---------------------------------------------------------------------------
// Signing PDFs

export interface SignOptions {
  /**
   * The hash to print in the footer instead of the document's own: the archive's content
   * SHA-256 of the stored request and result, so a reader can check the sheet against the record.
   */
  readonly contentSha256?: string;
  /** The signing time written into the PDF and the CMS (default now). */
  readonly signingTime?: Date;
  /** Location field of the signature (default the signer's organisation). */
  readonly location?: string;
  readonly reason?: string;
}

/** Placeholder fields for a signer (reason, name, location) as the PDF shows them. */
export function placeholderFor(signer: SheetSigner, signingTime: Date, options: SignOptions = {}): PlaceholderOptions {
  const id = signer.identity;
  return {
    reason: options.reason ?? `Dosing record signed by ${id.name}, ${id.role}${id.demo ? ` (${DEMO_LABEL})` : ''}`,
    name: id.name,
    location: options.location ?? id.organisation ?? 'oxidant-dosing service',
    contactInfo: id.role,
    signingTime,
    signatureLength: signer.signatureLength,
  };
}

/** Sign a PDF that carries a signature placeholder (renderSheet with `placeholder`). */
export async function signPdf(pdfWithPlaceholder: Buffer, signer: SheetSigner, signingTime: Date): Promise<Buffer> {
  return new SignPdf().sign(pdfWithPlaceholder, signer, signingTime);
}

/**
 * Render and sign a sheet: the signer's name, role and certificate subject go into the
 * signature block (so the content hash covers who signed), then the PDF is signed.
 */
export async function renderSignedSheet(doc: SheetDocument, signer: SheetSigner, options: SignOptions = {}): Promise<{ pdf: Buffer; document: SheetDocument }> {
  const signingTime = options.signingTime ?? new Date();
  const id = signer.identity;
  const document = withSignedBy(
    doc,
    {
      name: id.name,
      role: id.role,
      ...(id.organisation !== undefined ? { organisation: id.organisation } : {}),
      certificateSubject: id.certificateSubject,
    },
    isoSeconds(signingTime),
    {
      ...(options.contentSha256 !== undefined ? { contentSha256: options.contentSha256 } : {}),
      ...(id.demo ? { notice: `${DEMO_LABEL}: signed with the self-signed demo certificate made at first start` } : {}),
    },
  );
  const unsigned = await renderSheet(document, { placeholder: placeholderFor(signer, signingTime, options) });
  return { pdf: await signPdf(unsigned, signer, signingTime), document };
}

function isoSeconds(d: Date): string {
  return d.toISOString().replace(/\.\d{3}Z$/, 'Z');
}
