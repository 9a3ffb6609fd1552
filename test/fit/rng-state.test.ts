import { describe, expect, it } from "vitest";
import { Rng } from "../../src/random.js";

describe("Rng.getState / setState", () => {
  it("continue the identical stream after a JSON round trip, including a cached normal", () => {
    // The checkpoint contract of every sampler rests on this: the restored generator must
    // reproduce the original's next outputs exactly (no tolerance). An odd number of normal()
    // calls leaves the second Box–Muller value cached, which must survive too.
    const a = new Rng(42);
    for (let i = 0; i < 5; i++) a.uniform();
    a.normal();
    const saved = JSON.parse(JSON.stringify(a.getState()));
    expect(saved.spareNormal).not.toBeNull();
    const expected = [a.normal(), a.uniform(), a.nextUint32(), a.normal(), a.int(1000)];
    const b = new Rng(7);
    b.setState(saved);
    expect([b.normal(), b.uniform(), b.nextUint32(), b.normal(), b.int(1000)]).toEqual(expected);
  });

  it("rejects a malformed state", () => {
    const r = new Rng(1);
    expect(() => r.setState({ s: [1, 2, 3], spareNormal: null } as never)).toThrow(/four unsigned 32-bit integers/);
    expect(() => r.setState({ s: [0, 0, 0, 0], spareNormal: null })).toThrow(/all-zero state/);
  });
});
