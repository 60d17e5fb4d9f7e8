import './styles.css';
import { mountIslands } from './islands/mount-islands.tsx';

mountIslands(document);
