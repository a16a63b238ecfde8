import { describe, expect, it } from "vitest";
import { findCycles } from "../../../scripts/check-cycles";

// Tarjan's strongly connected components (Tarjan, "Depth-first search and linear graph algorithms",
// SIAM J. Comput. 1(2), 1972): every cycle lies inside one component with more than one node.
describe("findCycles", () => {
  it("finds a three-file cycle and a self-import, and nothing in a tree", () => {
    const g = new Map<string, string[]>([
      ["a", ["b"]],
      ["b", ["c"]],
      ["c", ["a", "d"]],
      ["d", []],
      ["e", ["e"]],
      ["f", ["d"]],
    ]);
    const cycles = findCycles(g).map((c) => [...c].sort());
    expect(cycles).toHaveLength(2);
    expect(cycles).toContainEqual(["a", "b", "c"]);
    expect(cycles).toContainEqual(["e"]);
  });
  it("reports no cycle in an acyclic graph", () => {
    expect(
      findCycles(
        new Map([
          ["x", ["y"]],
          ["y", ["z"]],
          ["z", []],
        ]),
      ),
    ).toEqual([]);
  });
});
