// @vitest-environment happy-dom
// The stride views' transport controls (components/views/Transport.svelte), one component for the
// single-leg, two-leg and lateral stride views over one Playback (lib/playback.svelte.ts): a sample
// back and on within the samples, the scrubber, the speeds offered, the ids the views and the e2e
// tests find them by, everything disabled until there are samples.
import { fireEvent, render, screen } from '@testing-library/svelte';
import { beforeEach, describe, expect, it } from 'vitest';
import Transport from '../../src/ui/components/views/Transport.svelte';
import { Playback } from '../../src/ui/lib/playback.svelte.js';

beforeEach(() => {
  document.body.innerHTML = '';
});

const settle = () => new Promise((r) => setTimeout(r, 0));

describe('transport controls', () => {
  it('step and scrub within the samples, each step pausing the playback', async () => {
    const times = [0, 0.01, 0.02, 0.03];
    const pb = new Playback(() => times.length, (i) => times[i], 0.25);
    render(Transport, { props: { pb, count: times.length, id: 'stride', speeds: [0.05, 0.25, 1], valuetext: 't = 0 s', readout: 't = 0 s · stride 0' } });
    const back = screen.getByLabelText('One sample back');
    const on = screen.getByLabelText('One sample on');
    await fireEvent.click(back);
    expect(pb.index).toBe(0); // not before the first sample
    for (let i = 0; i < 6; i++) await fireEvent.click(on);
    expect(pb.index).toBe(3); // not past the last
    const scrub = document.getElementById('stride-scrub') as HTMLInputElement;
    expect(scrub.max).toBe('3');
    await fireEvent.input(scrub, { target: { value: '1' } });
    expect(pb.index).toBe(1);
    expect(scrub.getAttribute('aria-valuetext')).toBe('t = 0 s');
    // the speeds as the views offer them, the first and real time said in words
    const speed = document.getElementById('stride-speed') as HTMLSelectElement;
    expect([...speed.options].map((o) => o.textContent)).toEqual(['0.05 × real time', '0.25 ×', '1 × real time']);
    pb.playing = true;
    await settle();
    await fireEvent.click(screen.getByTestId('pause'));
    expect(pb.playing).toBe(false);
    expect(screen.getByTestId('play')).toBeTruthy();
  });

  it('is disabled until there are samples, under the view’s own ids', () => {
    const pb = new Playback(() => 0, () => 0, 0.05);
    render(Transport, { props: { pb, count: 0, id: 'lateral', speeds: [0.02, 1], valuetext: '', readout: '' } });
    expect((screen.getByTestId('play') as HTMLButtonElement).disabled).toBe(true);
    expect((screen.getByLabelText('One sample on') as HTMLButtonElement).disabled).toBe(true);
    expect((document.getElementById('lateral-scrub') as HTMLInputElement).disabled).toBe(true);
    expect(document.getElementById('lateral-speed')).toBeTruthy();
  });
});
