// The film's display image, fetched and decoded once per URL in the browser. The desk asks for it on
// its first render, so the decode (a few hundred milliseconds for a 3,000 px film) runs off the main
// thread while the konva stage is still loading, instead of on the first draw (bench/film-desk.ts).
// An ImageBitmap holds the decoded pixels, so drawing it on the stage's canvas does not decode again.
const pending = new Map<string, Promise<ImageBitmap>>();

function loadImage(url: string): Promise<HTMLImageElement> {
  return new Promise((resolve, reject) => {
    const el = new window.Image();
    el.decoding = "async";
    el.onload = () => resolve(el);
    el.onerror = () => reject(new Error("The film image could not be loaded."));
    el.src = url; // the page preloads this URL, so the bytes usually come from the cache
  });
}

export function loadFilmImage(url: string): Promise<ImageBitmap> {
  let p = pending.get(url);
  if (!p) {
    p = loadImage(url).then((el) => createImageBitmap(el));
    pending.set(url, p);
    // A failed load may be retried (a new desk, a reload); a loaded one is kept while the page lives.
    p.catch(() => pending.delete(url));
    if (pending.size > 4) pending.delete(pending.keys().next().value as string);
  }
  return p;
}
