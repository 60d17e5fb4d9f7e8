import './styles.css';
import { mountIslands } from './islands/mount-islands.tsx';
import { focusFieldsFromErrorSummaries } from './lib/error-summary-links.ts';
import { watchSessionTimeout } from './lib/session-timeout.ts';

mountIslands(document);
focusFieldsFromErrorSummaries(document);
watchSessionTimeout(document);
