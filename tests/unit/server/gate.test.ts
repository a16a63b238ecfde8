/**
 * The gate in front of the libSQL server (server/db/unit-of-work.ts): at most `limit` units of one
 * process run at once, the others wait and start in the order they came (first come, first
 * served), and a failing unit frees its turn. The expected figures are the test's own arithmetic:
 * 7 units through a gate of 3 never overlap more than 3 at a time and start in the order 0…6.
 */
import { describe, expect, it } from "vitest";
import { Gate } from "../../../server/db/unit-of-work";

const tick = () => new Promise((r) => setTimeout(r, 5));

describe("the gate in front of the libSQL server", () => {
  it("lets at most `limit` through at once, in the order they came; a failure frees its turn", async () => {
    const gate = new Gate(3);
    let running = 0;
    let most = 0;
    const started: number[] = [];
    const outcomes = await Promise.allSettled(
      Array.from({ length: 7 }, (_, i) =>
        gate.run(async () => {
          started.push(i);
          running++;
          most = Math.max(most, running);
          await tick();
          running--;
          if (i === 1) throw new Error("refused");
          return i;
        }),
      ),
    );
    expect(most).toBe(3);
    expect(started).toEqual([0, 1, 2, 3, 4, 5, 6]);
    expect(outcomes.map((o) => o.status)).toEqual(["fulfilled", "rejected", ...Array(5).fill("fulfilled")]);
    // after all of it, the gate is empty again: three more start at once
    most = 0;
    await Promise.all(
      [0, 1, 2].map(() =>
        gate.run(async () => {
          running++;
          most = Math.max(most, running);
          await tick();
          running--;
        }),
      ),
    );
    expect(most).toBe(3);
  });
});
