// Playing a trajectory's samples in (scaled) real time, shared by the stride views of every model
// kind: the sample shown (`index`), whether it plays, and the playback speed (simulated seconds per
// wall second). The view supplies the number of samples and each sample's time.

export class Playback {
  index = $state(0);
  playing = $state(false);
  speed = $state(0.25);
  #frame = 0;
  #previous = 0;
  #count: () => number;
  #timeAt: (i: number) => number;

  constructor(count: () => number, timeAt: (i: number) => number, speed: number) {
    this.#count = count;
    this.#timeAt = timeAt;
    this.speed = speed;
  }

  #tick = (now: number): void => {
    const n = this.#count();
    if (!this.playing || n === 0) return;
    const dt = this.#previous ? (now - this.#previous) / 1000 : 0;
    this.#previous = now;
    const target = this.#timeAt(this.index) + dt * this.speed;
    let i = this.index;
    while (i < n - 1 && this.#timeAt(i + 1) <= target) i++;
    if (i >= n - 1) {
      this.index = n - 1;
      this.playing = false;
      return;
    }
    this.index = i;
    this.#frame = requestAnimationFrame(this.#tick);
  };

  play(): void {
    const n = this.#count();
    if (n === 0) return;
    if (this.index >= n - 1) this.index = 0;
    this.playing = true;
    this.#previous = 0;
    this.#frame = requestAnimationFrame(this.#tick);
  }

  pause(): void {
    this.playing = false;
    cancelAnimationFrame(this.#frame);
  }

  /** Stops the animation frame loop (the view's onDestroy). */
  stop(): void {
    cancelAnimationFrame(this.#frame);
  }
}
