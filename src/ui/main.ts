import { mount } from 'svelte';
import './app.css';
import App from './App.svelte';
import { STATE_COLORS } from '../core/figures/theme.js';

// The states' colours for the page's CSS, from the one table the figures use.
for (const [state, color] of Object.entries(STATE_COLORS)) document.documentElement.style.setProperty(`--state-${state}`, color);

mount(App, { target: document.getElementById('app')! });
