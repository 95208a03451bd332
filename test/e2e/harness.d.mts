// Types of harness.mjs (plain JavaScript, so that the benchmark runs it in Node without a build).
import type { BrowserContext, LaunchOptions } from 'playwright-core';

export const ROOT: string;
export const CHROMIUM: string;
export const BUILT: string;
export const CHROMIUM_ARGS: string[];
export function haveChromium(): boolean;
export function ensureBuilt(log?: (message: string) => void): void;
export function freePort(): Promise<number>;
export function startPreview(): Promise<{ url: string; stop(): Promise<void> }>;
export function launchBrowser(options?: LaunchOptions & Record<string, unknown>): Promise<{ context: BrowserContext; close(): Promise<void> }>;
