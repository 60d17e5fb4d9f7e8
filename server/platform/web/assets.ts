import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { projectPath } from '../config/project-root.ts';
import { logger } from '../logging/logger.ts';

/** Where `vite build` writes the client (see vite.config.ts). */
export const CLIENT_DIST = projectPath('dist', 'client');

export interface ClientAssets {
  scripts: string[];
  styles: string[];
}

interface ManifestEntry {
  file: string;
  css?: string[];
  isEntry?: boolean;
}

/**
 * The hashed file names of the client entry, read from Vite's manifest. Without a build the pages
 * still render (server-only), and the start-up log says why the islands are missing.
 */
export function readClientAssets(distDir = CLIENT_DIST): ClientAssets {
  const manifestPath = path.join(distDir, '.vite', 'manifest.json');
  if (!existsSync(manifestPath)) {
    logger.warn({ manifestPath }, 'no client build (run `npx vite build`): pages render without islands');
    return { scripts: [], styles: [] };
  }
  const manifest = JSON.parse(readFileSync(manifestPath, 'utf8')) as Record<string, ManifestEntry>;
  const entry = manifest['index.html'];
  if (!entry) return { scripts: [], styles: [] };
  return { scripts: [`/${entry.file}`], styles: (entry.css ?? []).map((file) => `/${file}`) };
}
