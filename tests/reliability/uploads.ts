import type { Test } from 'supertest';
import { ATTACHMENT_MAX_BYTES } from '../../shared/schemas/desk';
import { PDF, PNG } from './records';

/**
 * Multipart requests for the upload routes: valid small files (sent "as is"), and the ways an upload goes wrong
 * (the valid branch's "mutations"): a type not taken, content that is not what it claims, too large, empty, the
 * wrong field, two files, too many fields.
 */
export interface UploadCase {
  name: string;
  valid: boolean;
  attach: (req: Test) => Test;
}

const OVERSIZE = Buffer.concat([PNG, Buffer.alloc(ATTACHMENT_MAX_BYTES + 1 - PNG.length)]);
const GIF = Buffer.from('GIF89a\x01\x00\x01\x00\x80\x00\x00\xff\xff\xff\x00\x00\x00,\x00\x00\x00\x00\x01\x00\x01\x00\x00\x02\x02D\x01\x00;', 'latin1');
const file = (buf: Buffer, filename: string, contentType: string, field = 'file') => (req: Test) => req.attach(field, buf, { filename, contentType });

export const VALID_UPLOADS: UploadCase[] = [
  { name: 'PNG photo', valid: true, attach: file(PNG, 'bench photo.png', 'image/png') },
  { name: 'PDF certificate', valid: true, attach: file(PDF, 'KHP certificate.pdf', 'application/pdf') },
  { name: 'PNG sent as octet-stream', valid: true, attach: file(PNG, 'photo', 'application/octet-stream') },
  { name: 'PDF with a path and quotes in its name', valid: true, attach: file(PDF, '../../etc/"cert"; x=.pdf', 'application/pdf') },
];

export const BAD_UPLOADS: UploadCase[] = [
  { name: 'script text claimed as PNG', valid: false, attach: file(Buffer.from('<script>alert(1)</script>'), 'photo.png', 'image/png') },
  { name: 'GIF (not a type taken)', valid: false, attach: file(GIF, 'anim.gif', 'image/gif') },
  { name: 'PDF claimed as PNG', valid: false, attach: file(PDF, 'photo.png', 'image/png') },
  { name: 'empty file', valid: false, attach: file(Buffer.alloc(0), 'empty.png', 'image/png') },
  { name: 'wrong field name', valid: false, attach: file(PNG, 'photo.png', 'image/png', 'photo') },
  { name: 'two files', valid: false, attach: (req) => file(PDF, 'b.pdf', 'application/pdf')(file(PNG, 'a.png', 'image/png')(req)) },
  {
    name: 'too many fields',
    valid: false,
    attach: (req) => file(PNG, 'a.png', 'image/png')(['a', 'b', 'c', 'd', 'e'].reduce((r, k) => r.field(k, 'x'), req)),
  },
  { name: 'one byte over the size limit', valid: false, attach: file(OVERSIZE, 'big.png', 'image/png') },
];
