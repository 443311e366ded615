/** Renderer entry: starts the engine worker and mounts the application. */
import { createRoot } from 'react-dom/client';
import { App } from './App.tsx';
import { startBrowserEngine } from './engine/browserEngine.ts';

const root = document.getElementById('root');
if (!root) throw new Error('the page has no #root element');
createRoot(root).render(<App engine={startBrowserEngine()} />);
