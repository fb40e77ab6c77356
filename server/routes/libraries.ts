import type { NextFunction, Request, Response } from 'express';
import multer from 'multer';
import { mkdirSync } from 'node:fs';
import { readFile, unlink } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { idParam, parseId } from '../middlewares/params';
import { KeelsonApiError } from '../../shared/errors';
import { confirmUploadBodySchema, libraryListQuerySchema } from '../../shared/libraries';
import {
  confirmUpload,
  createUpload,
  deleteEdition,
  discardUpload,
  editionDataJson,
  exportEditionCsv,
  getEdition,
  getLibrary,
  getUpload,
  listLibraries,
  publishLibrary,
  setArchived,
  unpublishLibrary,
} from '../services/libraries';
import type { AppDeps } from '../app-deps';

/** Where multer streams uploads before parsing (one folder per server process); every file is removed once read or refused. */
export const UPLOAD_TMP = join(tmpdir(), `keelson-uploads-${process.pid}`);

/** Return-library routes: uploads and their review, editions, sharing, archive (see shared/libraries.ts). */
export function registerLibraryRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db } = deps;
  const writers = ['admin', 'researcher'] as const;
  const admin = ['admin'] as const;
  const limitMb = Math.round((deps.uploadLimit / 1024 / 1024) * 10) / 10;

  // Streamed to a temporary file, read once for parsing, then removed.
  mkdirSync(UPLOAD_TMP, { recursive: true });
  const upload = multer({ storage: multer.diskStorage({ destination: UPLOAD_TMP }), limits: { fileSize: deps.uploadLimit, files: 1, fields: 10 } });
  const receiveFile = (req: Request, res: Response, next: NextFunction) => {
    upload.single('file')(req, res, (err: unknown) => {
      if (!err) return next();
      const e = err as { code?: string; message?: string };
      if (e.code === 'LIMIT_FILE_SIZE') return next(new KeelsonApiError('payload_too_large', `The file is larger than the upload limit of ${limitMb} MB. Nothing was saved.`));
      if (e.code === 'LIMIT_UNEXPECTED_FILE') return next(new KeelsonApiError('bad_request', 'Send one CSV in the multipart field named file'));
      if (typeof e.code === 'string' && e.code.startsWith('LIMIT_')) return next(new KeelsonApiError('bad_request', `Upload refused: ${e.message ?? e.code}`));
      return next(new KeelsonApiError('bad_request', `The upload could not be read: ${e.message ?? 'malformed multipart body'}`));
    });
  };

  api.post('/libraries/uploads', writers, receiveFile, async (req: Request, res: Response) => {
    const user = currentUser(req);
    const file = req.file;
    if (!file) throw new KeelsonApiError('bad_request', 'Send the CSV as multipart/form-data in a field named file');
    try {
      const buffer = await readFile(file.path);
      // Optional form field libraryId: the upload is meant as that library's next edition.
      const raw = (req.body as Record<string, unknown> | undefined)?.libraryId;
      const libraryId = raw === undefined || raw === '' ? undefined : parseId(raw, 'library');
      res.status(201).json({ upload: createUpload(db, user, { name: file.originalname, buffer }, { libraryId }) });
    } finally {
      await unlink(file.path).catch(() => undefined);
    }
  });

  api.get('/libraries/uploads/:id', writers, (req: Request, res: Response) => {
    res.json({ upload: getUpload(db, currentUser(req), String(req.params.id)) });
  });

  api.delete('/libraries/uploads/:id', writers, (req: Request, res: Response) => {
    discardUpload(db, currentUser(req), String(req.params.id));
    res.status(204).end();
  });

  api.post('/libraries/uploads/:id/confirm', writers, (req: Request, res: Response) => {
    const body = parseOr400(confirmUploadBodySchema, req.body, 'confirmation');
    res.status(201).json(confirmUpload(db, currentUser(req), String(req.params.id), body));
  });

  api.get('/libraries', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(libraryListQuerySchema, req.query, 'library search');
    res.json({ libraries: listLibraries(db, currentUser(req), q) });
  });

  api.get('/libraries/:id', 'signed-in', (req: Request, res: Response) => {
    res.json({ library: getLibrary(db, currentUser(req), idParam(req, 'library')) });
  });

  api.get('/libraries/:id/editions/:n', 'signed-in', (req: Request, res: Response) => {
    res.json({ edition: getEdition(db, currentUser(req), idParam(req, 'library'), idParam(req, 'edition', 'n')) });
  });

  api.get('/libraries/:id/editions/:n/data', 'signed-in', (req: Request, res: Response) => {
    const json = editionDataJson(db, currentUser(req), idParam(req, 'library'), idParam(req, 'edition', 'n'));
    res.type('application/json').send(json);
  });

  api.get('/libraries/:id/editions/:n/export.csv', 'signed-in', (req: Request, res: Response) => {
    const { fileName, csv } = exportEditionCsv(db, currentUser(req), idParam(req, 'library'), idParam(req, 'edition', 'n'));
    res.type('text/csv; charset=utf-8').attachment(fileName).send(csv);
  });

  api.delete('/libraries/:id/editions/:n', admin, (req: Request, res: Response) => {
    deleteEdition(db, currentUser(req), idParam(req, 'library'), idParam(req, 'edition', 'n'));
    res.status(204).end();
  });

  api.post('/libraries/:id/publish', admin, (req: Request, res: Response) => {
    res.json({ library: publishLibrary(db, currentUser(req), idParam(req, 'library')) });
  });

  api.post('/libraries/:id/unpublish', admin, (req: Request, res: Response) => {
    res.json({ library: unpublishLibrary(db, currentUser(req), idParam(req, 'library')) });
  });

  api.post('/libraries/:id/archive', writers, (req: Request, res: Response) => {
    res.json({ library: setArchived(db, currentUser(req), idParam(req, 'library'), true) });
  });

  api.post('/libraries/:id/restore', writers, (req: Request, res: Response) => {
    res.json({ library: setArchived(db, currentUser(req), idParam(req, 'library'), false) });
  });
}
