import { attachmentRoutes } from './attachments';
import { exportRoutes } from './exports';
import { importRoutes } from './imports';
import { reviewRoutes } from './review';
import { runRoutes } from './runs';

/** The team desk's routes (issue 8): runs table and report, review, exports, imports, attachments. */
export const deskRoutes = [...runRoutes, ...reviewRoutes, ...exportRoutes, ...importRoutes, ...attachmentRoutes];
