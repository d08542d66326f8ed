import { describe, expect, it } from "vitest";
import { drainInsert, drainObservation, drainUpdate } from "../../lib/validation/drains";

const good = {
  insertedAt: "2026-11-02T08:00:00Z",
  insertedBy: "Dr Imani Castellanos (registrar)",
  sizeFr: 12,
  site: "5th intercostal space, mid-axillary line",
  technique: "seldinger",
  indication: "air",
  drainage: "underwater-seal",
};

describe("drain insert schema", () => {
  it("accepts a complete record and defaults suction off", () => {
    // common practice: suction is added only when needed
    const v = drainInsert.parse(good);
    expect(v.suctionOn).toBe(false);
    expect(v.sizeFr).toBe(12);
  });

  it("names the field when suction is on without a level, or a level is given with suction off", () => {
    // house rule: bad input gets a message on the field
    const on = drainInsert.safeParse({ ...good, suctionOn: true });
    expect(on.success).toBe(false);
    expect(on.error?.issues[0]?.path).toEqual(["suctionKpa"]);
    const off = drainInsert.safeParse({ ...good, suctionOn: false, suctionKpa: 2 });
    expect(off.success).toBe(false);
  });

  it("refuses sizes outside 6-40 Fr and fractional sizes", () => {
    // chest drains run from about 6 to 40 Fr (common practice); French gauge is whole numbers
    expect(drainInsert.safeParse({ ...good, sizeFr: 4 }).success).toBe(false);
    expect(drainInsert.safeParse({ ...good, sizeFr: 44 }).success).toBe(false);
    expect(drainInsert.safeParse({ ...good, sizeFr: 12.5 }).success).toBe(false);
  });
});

describe("drain update schema", () => {
  it("tells remove and suction apart and requires a reason for removal", () => {
    // house rule: removal carries its time and reason
    expect(drainUpdate.parse({ action: "remove", removedAt: "2026-11-04T10:00:00Z", removalReason: "Lung re-expanded" }).action).toBe("remove");
    expect(drainUpdate.safeParse({ action: "remove", removedAt: "2026-11-04T10:00:00Z" }).success).toBe(false);
    expect(drainUpdate.parse({ action: "suction", suctionOn: true, suctionKpa: 2 }).action).toBe("suction");
    expect(drainUpdate.safeParse({ action: "suction", suctionOn: true }).success).toBe(false);
    expect(drainUpdate.safeParse({ action: "explode" }).success).toBe(false);
  });
});

describe("observation schema", () => {
  it("accepts the four bubbling states only", () => {
    // bubbling states: none / on coughing / on expiration / continuous (common practice)
    for (const b of ["none", "on-coughing", "on-expiration", "continuous"]) {
      expect(drainObservation.safeParse({ observedAt: "2026-11-02T10:00:00Z", swinging: true, bubbling: b }).success).toBe(true);
    }
    expect(drainObservation.safeParse({ observedAt: "2026-11-02T10:00:00Z", swinging: true, bubbling: "some" }).success).toBe(false);
    expect(drainObservation.safeParse({ observedAt: "2026-11-02T10:00:00Z", swinging: "yes", bubbling: "none" }).success).toBe(false);
    expect(drainObservation.safeParse({ observedAt: "2026-11-02T10:00:00Z", swinging: true, bubbling: "none", fluidMl: -5 }).success).toBe(false);
  });
});
