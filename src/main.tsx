import './styles.css';
import { mountIslands } from './islands/mount-islands.tsx';
import { focusFieldsFromErrorSummaries } from './lib/error-summary-links.ts';

mountIslands(document);
focusFieldsFromErrorSummaries(document);
