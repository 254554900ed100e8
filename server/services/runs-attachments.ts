import { createHash, randomUUID } from 'node:crypto';
import type { Request, Response } from 'express';
import { fileTypeFromBuffer } from 'file-type';
import multer from 'multer';
import { ATTACHMENT_MAX_BYTES, ATTACHMENT_TYPES, type Attachment } from '../../shared/schemas/desk';
import type { ServerContext } from '../auth/context';
import { HttpError, notFound } from '../http/errors';
import type { Caller } from '../http/routes';
import * as repo from '../repos/runs-attachments';
import { storageFor } from '../storage';
import { audit } from './audit';

/**
 * Attachments: one file per request, held in memory up to the size limit, its type detected from the content
 * (magic bytes) and checked against the allowed list and against what the client claimed; stored under a
 * server-made key; served back as a download.
 */
const upload = multer({
  storage: multer.memoryStorage(),
  limits: { fileSize: ATTACHMENT_MAX_BYTES, files: 1, fields: 4, parts: 6 },
}).single('file');

const EXT: Record<string, string> = { 'image/png': 'png', 'image/jpeg': 'jpg', 'image/webp': 'webp', 'image/heic': 'heic', 'application/pdf': 'pdf' };
const sameType = (a: string, b: string) => a.replace('image/jpg', 'image/jpeg') === b.replace('image/jpg', 'image/jpeg');

function receive(req: Request, res: Response): Promise<Express.Multer.File> {
  return new Promise((resolve, reject) => {
    upload(req, res, (err: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') {
          return reject(new HttpError(413, 'file_too_large', `The file is larger than ${ATTACHMENT_MAX_BYTES / 1024 / 1024} MB.`));
        }
        return reject(new HttpError(400, 'bad_upload', `The upload was not understood (${err.code}). Send one file in the field "file".`));
      }
      if (err) return reject(err);
      if (!req.file) return reject(new HttpError(400, 'no_file', 'Choose a file to upload (field "file").'));
      resolve(req.file);
    });
  });
}

/** Keeps a file name fit for a header: no path, no control characters, at most 150 characters. */
export function cleanName(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? 'file';
  // Control characters are exactly what must not reach a Content-Disposition header.
  // eslint-disable-next-line no-control-regex
  const clean = base.replace(/[\u0000-\u001f\u007f"]/g, '').trim().slice(-150);
  return clean || 'file';
}

export async function store(
  app: ServerContext,
  caller: Caller,
  req: Request,
  res: Response,
  target: { labId: string; runId?: string; calibrationId?: string },
): Promise<Attachment> {
  const file = await receive(req, res);
  const detected = await fileTypeFromBuffer(file.buffer);
  if (!detected || !(ATTACHMENT_TYPES as readonly string[]).includes(detected.mime)) {
    throw new HttpError(415, 'unsupported_type', `Only photos (PNG, JPEG, WebP, HEIC) and PDF files can be attached; this file's content is ${detected ? detected.mime : 'not a recognised type'}.`);
  }
  if (file.mimetype && file.mimetype !== 'application/octet-stream' && !sameType(file.mimetype, detected.mime)) {
    throw new HttpError(415, 'type_mismatch', `The file says it is ${file.mimetype} but its content is ${detected.mime}. Nothing was stored.`);
  }
  const originalName = cleanName(Buffer.from(file.originalname, 'latin1').toString('utf8'));
  const key = `${target.labId}/${randomUUID()}.${EXT[detected.mime] ?? detected.ext}`;
  const sha256 = createHash('sha256').update(file.buffer).digest('hex');
  const storage = storageFor(app.database);
  await storage.put(key, file.buffer, detected.mime);
  try {
    const row = await app.database.db.transaction(async (tx) => {
      const r = await repo.insert(tx, {
        labId: target.labId,
        runId: target.runId ?? null,
        calibrationId: target.calibrationId ?? null,
        storageKey: key,
        originalName,
        mimeType: detected.mime,
        sizeBytes: file.size,
        sha256,
        uploadedBy: caller.userId,
        createdAt: app.now(),
      });
      await audit(tx, {
        labId: target.labId,
        actorId: caller.userId,
        action: 'attachment.upload',
        entity: target.runId ? 'run' : 'calibration',
        entityId: target.runId ?? target.calibrationId ?? null,
        after: { attachmentId: r.id, originalName, mimeType: detected.mime, sizeBytes: file.size, sha256 },
      });
      return r;
    });
    return repo.toApi({ ...row, uploadedByName: caller.displayName });
  } catch (err) {
    // The record did not commit: do not leave an orphan object behind.
    await storage.delete(key).catch(() => {});
    throw err;
  }
}

export async function download(app: ServerContext, labId: string, id: string, res: Response): Promise<void> {
  const row = await repo.byId(app.database.db, id);
  if (!row || row.labId !== labId) throw notFound('Attachment');
  const body = await storageFor(app.database).get(row.storageKey);
  if (!body) throw new HttpError(410, 'attachment_missing', 'The stored file is missing from storage.');
  const ascii = row.originalName.replace(/[^\x20-\x7e]/g, '_').replace(/[\\"]/g, '_');
  res.setHeader('Content-Type', row.mimeType);
  res.setHeader('Content-Length', String(body.length));
  res.setHeader('Content-Disposition', `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(row.originalName)}`);
  res.setHeader('Content-Security-Policy', "default-src 'none'; sandbox");
  res.status(200).end(body);
}

export async function listForCalibration(app: ServerContext, labId: string, calibrationId: string) {
  return (await repo.listForCalibration(app.database.db, labId, calibrationId)).map(repo.toApi);
}
