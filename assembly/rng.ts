// Counter-based random numbers: every draw is a pure function of
// (seed, stream, counter), so a rollout's terrain does not depend on how many
// rollouts ran before it, on which worker, or in which shard.
//
// Mixer: the SplitMix64 finalizer (G. Steele, D. Lea, C. Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014), applied in a
// cascade over the three keys. Gaussian: Box–Muller (1958), cosine branch.
// Math.log/cos/sqrt here are AssemblyScript's own (compiled into the module),
// so the stream is bit-identical in Node and in a browser.

@inline function mix64(z0: u64): u64 {
  let z = z0;
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9;
  z = (z ^ (z >> 27)) * 0x94d049bb133111eb;
  return z ^ (z >> 31);
}

export function randomBits(seed: u64, stream: u64, counter: u64): u64 {
  let z = mix64(seed + 0x9e3779b97f4a7c15);
  z = mix64(z ^ (stream * 0xd1b54a32d192ed03 + 0x632be59bd9b4e019));
  return mix64(z ^ (counter * 0x9e3779b97f4a7c15 + 0xc2b2ae3d27d4eb4f));
}

// Uniform in (0, 1): 53 random bits, offset by half a unit so 0 never occurs.
export function uniform(seed: u64, stream: u64, counter: u64): f64 {
  return (<f64>(randomBits(seed, stream, counter) >> 11) + 0.5) * 1.1102230246251565e-16;
}

// Standard normal draw number `index` of a stream (uses counters 2i and 2i+1).
export function gaussian(seed: u64, stream: u64, index: u64): f64 {
  const u1 = uniform(seed, stream, index << 1);
  const u2 = uniform(seed, stream, (index << 1) | 1);
  return Math.sqrt(-2.0 * Math.log(u1)) * Math.cos(6.283185307179586 * u2);
}
