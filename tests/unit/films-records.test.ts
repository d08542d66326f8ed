// Pure parts of the film records: the calibration in plain words, DICOM wall-clock times as instants,
// upload file names and the size limit.
import { describe, expect, it } from "vitest";
import { calibrationFromDicom, calibrationFromReferenceLine } from "@/measure";
import { effectiveCalibration, positionLabel, projectionLabel } from "@/lib/film-view";
import { dicomTimeToInstant } from "@/lib/film-time";
import { cleanFilename, filmKeys, filmMaxBytes } from "@/lib/films/store-film";

describe("calibration in plain words", () => {
  // Which plane each attribute describes: DICOM PS3.3 section 10.7.1.3 (Imager Pixel Spacing at the
  // detector; Pixel Spacing at the patient when corrected, correction status from the calibration type).
  it("Imager Pixel Spacing alone: the detector plane", () => {
    const c = effectiveCalibration(calibrationFromDicom({ imagerPixelSpacingMm: [0.15, 0.15] }), null);
    expect(c.source).toBe("dicom");
    expect(c.words).toBe("detector plane from Imager Pixel Spacing");
  });

  it("Imager Pixel Spacing with a magnification factor: both planes", () => {
    const c = effectiveCalibration(calibrationFromDicom({ imagerPixelSpacingMm: [0.15, 0.15], estimatedRadiographicMagnificationFactor: 1.1 }), null);
    expect(c.words).toBe("detector plane from Imager Pixel Spacing; patient plane from Imager Pixel Spacing and the magnification factor");
  });

  it("Pixel Spacing with no calibration type and no Imager Pixel Spacing: correction status unknown", () => {
    const c = effectiveCalibration(calibrationFromDicom({ pixelSpacingMm: [0.143, 0.143] }), null);
    expect(c.correctionUnknown).toBe(true);
    expect(c.words).toBe("detector plane from Pixel Spacing; correction status unknown");
  });

  it("Pixel Spacing calibrated by GEOMETRY: the patient plane", () => {
    const c = effectiveCalibration(calibrationFromDicom({ pixelSpacingMm: [0.125, 0.125], imagerPixelSpacingMm: [0.15, 0.15], pixelSpacingCalibrationType: "GEOMETRY" }), null);
    expect(c.words).toBe("detector plane from Imager Pixel Spacing; patient plane from calibrated Pixel Spacing");
  });

  it("no spacing at all, or a PNG film: Light index only (a ratio of diameters needs no calibration; Light RW, Pleural Diseases, textbook)", () => {
    expect(effectiveCalibration(calibrationFromDicom({}), null).words).toBe("no calibration: Light index only");
    const png = effectiveCalibration(null, null);
    expect(png.source).toBe("none");
    expect(png.words).toBe("no calibration: Light index only");
    expect(png.film).toBeNull();
  });

  it("a reference line wins over the header and names its length and plane", () => {
    const segment = { a: { x: 0, y: 0 }, b: { x: 200, y: 0 } };
    const override = { segment, knownLengthMm: 12.5, plane: "film" as const, calibration: calibrationFromReferenceLine(segment, 12.5, "film"), setBy: "u", setAt: "2026-11-21T10:00:00Z" };
    const c = effectiveCalibration(calibrationFromDicom({ imagerPixelSpacingMm: [0.15, 0.15] }), override);
    expect(c.source).toBe("reference-line");
    expect(c.words).toBe("reference line 12.5 mm, detector plane");
    expect(c.film?.rowMm).toBeCloseTo(0.0625, 12); // 12.5 mm over 200 px (plane geometry)
  });

  it("projection and position labels", () => {
    expect(projectionLabel("LL")).toBe("Left lateral");
    expect(projectionLabel("PA")).toBe("PA");
    expect(projectionLabel(null)).toBeNull();
    // Patient Position defined terms (DICOM PS3.3 C.7.3.1.1.2): HFS = head first, supine.
    expect(positionLabel("HFS")).toBe("supine (HFS)");
    expect(positionLabel("erect")).toBe("erect");
  });
});

describe("DICOM date and time as an instant (hospital time zone Europe/London)", () => {
  // UK clocks: GMT (UTC+0) in winter, BST (UTC+1) from the last Sunday of March to the last Sunday of
  // October (The Summer Time Order 2002); in 2026 that is 29 March to 25 October (common practice).
  it("a winter wall-clock time is UTC", () => {
    expect(dicomTimeToInstant("2026-03-14T10:15:00", "Europe/London")?.toISOString()).toBe("2026-03-14T10:15:00.000Z");
  });

  it("a summer wall-clock time is one hour ahead of UTC", () => {
    expect(dicomTimeToInstant("2026-07-01T10:00:00", "Europe/London")?.toISOString()).toBe("2026-07-01T09:00:00.000Z");
  });

  it("the day after the clocks go forward, and the day they go back", () => {
    expect(dicomTimeToInstant("2026-03-30T08:00:00", "Europe/London")?.toISOString()).toBe("2026-03-30T07:00:00.000Z");
    expect(dicomTimeToInstant("2026-10-26T08:00:00", "Europe/London")?.toISOString()).toBe("2026-10-26T08:00:00.000Z");
  });

  it("an offset in the file (Timezone Offset From UTC, 0008,0201) is used as given", () => {
    expect(dicomTimeToInstant("2026-07-01T10:00:00+02:00", "Europe/London")?.toISOString()).toBe("2026-07-01T08:00:00.000Z");
  });

  it("a date alone is midnight there; fractions of a second are kept; nonsense is null", () => {
    expect(dicomTimeToInstant("2026-11-21", "Europe/London")?.toISOString()).toBe("2026-11-21T00:00:00.000Z");
    expect(dicomTimeToInstant("2026-11-21T09:30:00.25", "Europe/London")?.toISOString()).toBe("2026-11-21T09:30:00.250Z");
    expect(dicomTimeToInstant("21/11/2026", "Europe/London")).toBeNull();
  });
});

describe("upload names, keys and the size limit", () => {
  it("keeps only the file's own name, without folders or control characters", () => {
    expect(cleanFilename("C:\\Users\\ward\\chest pa.dcm")).toBe("chest pa.dcm");
    expect(cleanFilename("../../etc/passwd")).toBe("passwd");
    expect(cleanFilename("film\u0000\u001b.png")).toBe("film.png");
    expect(cleanFilename("   ")).toBe("film");
    expect(cleanFilename("x".repeat(400))).toHaveLength(255);
  });

  it("names the three objects of a film under films/<id>/", () => {
    expect(filmKeys("3f1c0a52-1111-4222-8333-944455556666")).toEqual({
      original: "films/3f1c0a52-1111-4222-8333-944455556666/original",
      display: "films/3f1c0a52-1111-4222-8333-944455556666/display",
      thumb: "films/3f1c0a52-1111-4222-8333-944455556666/thumb",
    });
  });

  it("FILM_MAX_BYTES: a positive whole number of bytes, else 100 MB", () => {
    expect(filmMaxBytes({})).toBe(104_857_600);
    expect(filmMaxBytes({ FILM_MAX_BYTES: "5000000" })).toBe(5_000_000);
    expect(filmMaxBytes({ FILM_MAX_BYTES: "lots" })).toBe(104_857_600);
    expect(filmMaxBytes({ FILM_MAX_BYTES: "-1" })).toBe(104_857_600);
  });
});
