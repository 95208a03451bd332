import { mount } from 'svelte';
import './app.css';
import App from './App.svelte';
import { STATE_COLORS } from '../core/figures/theme.js';
import { nextTask } from './lib/yield.js';

// The states' colours for the page's CSS, from the one table the figures use.
for (const [state, color] of Object.entries(STATE_COLORS)) document.documentElement.style.setProperty(`--state-${state}`, color);

// The page is put together in a task of its own, not in the one that evaluates the modules: the
// two together were the first load's longest task.
void nextTask().then(() => mount(App, { target: document.getElementById('app')! }));
