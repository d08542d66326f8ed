"use client";
// Drop or choose several films; each goes up in its own request with its own progress bar.
import { useRouter } from "next/navigation";
import { useRef, useState, type DragEvent } from "react";
import { buttonClass } from "@/components/ui/button";

type UploadState =
  | { phase: "waiting" }
  | { phase: "sending"; fraction: number }
  | { phase: "reading" }
  | { phase: "stored" }
  | { phase: "failed"; message: string; duplicateOf?: string };

interface UploadItem {
  key: string;
  file: File;
  state: UploadState;
}

interface ServerAnswer {
  status: number;
  body: unknown;
}

function postFilm(url: string, file: File, onProgress: (fraction: number) => void): Promise<ServerAnswer> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open("POST", url);
    xhr.setRequestHeader("Accept", "application/json");
    xhr.setRequestHeader("Content-Type", file.type || "application/octet-stream");
    xhr.setRequestHeader("X-Film-Filename", encodeURIComponent(file.name));
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable && e.total > 0) onProgress(e.loaded / e.total);
    };
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : null;
      } catch {
        body = null;
      }
      resolve({ status: xhr.status, body });
    };
    xhr.onerror = () => reject(new Error("network"));
    xhr.onabort = () => reject(new Error("aborted"));
    xhr.send(file);
  });
}

function describeFailure(answer: ServerAnswer): { message: string; duplicateOf?: string } {
  const err = (answer.body as { error?: { message?: string; details?: { filmId?: unknown } } } | null)?.error;
  const message = err?.message ?? `The server answered ${answer.status}.`;
  const filmId = err?.details?.filmId;
  return typeof filmId === "string" ? { message, duplicateOf: filmId } : { message };
}

const megabytes = (n: number) =>
  n < 1_048_576 ? `${Math.max(1, Math.round(n / 1024))} KB` : `${(n / 1_048_576).toFixed(n < 10_485_760 ? 1 : 0)} MB`;

export function UploadZone({ episodeId, maxBytes }: { episodeId: string; maxBytes: number }) {
  const router = useRouter();
  const input = useRef<HTMLInputElement>(null);
  const [items, setItems] = useState<UploadItem[]>([]);
  const [over, setOver] = useState(false);
  const queue = useRef<Promise<void>>(Promise.resolve());

  const update = (key: string, state: UploadState) => setItems((all) => all.map((it) => (it.key === key ? { ...it, state } : it)));

  async function send(item: UploadItem) {
    if (item.file.size > maxBytes) {
      update(item.key, { phase: "failed", message: `This file is ${megabytes(item.file.size)}; films up to ${megabytes(maxBytes)} are accepted.` });
      return;
    }
    update(item.key, { phase: "sending", fraction: 0 });
    try {
      const answer = await postFilm(`/api/episodes/${episodeId}/films`, item.file, (fraction) =>
        update(item.key, fraction >= 1 ? { phase: "reading" } : { phase: "sending", fraction }),
      );
      if (answer.status === 201) {
        update(item.key, { phase: "stored" });
        router.refresh();
      } else {
        update(item.key, { phase: "failed", ...describeFailure(answer) });
      }
    } catch {
      update(item.key, { phase: "failed", message: "The upload did not reach Rimwatch. Check the connection and drop the file again." });
    }
  }

  function add(files: FileList | null) {
    if (!files || files.length === 0) return;
    const added = [...files].map((file, i): UploadItem => ({ key: `${Date.now()}-${i}-${file.name}`, file, state: { phase: "waiting" } }));
    setItems((all) => [...all, ...added]);
    // One film at a time: the server reads and decodes each, and a small machine stays responsive.
    for (const item of added) queue.current = queue.current.then(() => send(item));
  }

  function onDrop(e: DragEvent<HTMLDivElement>) {
    e.preventDefault();
    setOver(false);
    add(e.dataTransfer.files);
  }

  const finished = items.length > 0 && items.every((it) => it.state.phase === "stored" || it.state.phase === "failed");

  return (
    <div className="mb-4">
      <div
        onDragOver={(e) => {
          e.preventDefault();
          setOver(true);
        }}
        onDragLeave={() => setOver(false)}
        onDrop={onDrop}
        className={`rounded-md border-2 border-dashed px-4 py-5 text-center ${over ? "border-estuary-600 bg-estuary-50" : "border-line bg-paper"}`}
      >
        <p className="text-sm text-ink">
          Drop chest films here — DICOM from PACS, or PNG / JPEG exports — or{" "}
          <button type="button" className={buttonClass("quiet", "px-3 py-1")} onClick={() => input.current?.click()}>
            choose files
          </button>
        </p>
        <p className="mt-1 text-xs text-ink-soft">Several at once is fine. Up to {megabytes(maxBytes)} each. The original file is kept unchanged.</p>
        <input
          ref={input}
          type="file"
          multiple
          accept=".dcm,.dicom,.dic,application/dicom,image/png,image/jpeg"
          className="sr-only"
          aria-label="Choose film files to upload"
          data-testid="film-file-input"
          onChange={(e) => {
            add(e.currentTarget.files);
            e.currentTarget.value = "";
          }}
        />
      </div>
      {items.length > 0 ? (
        <ul className="mt-3 space-y-2" aria-live="polite" aria-label="Uploads">
          {items.map((it) => (
            <UploadRow key={it.key} item={it} />
          ))}
        </ul>
      ) : null}
      {finished ? (
        <button type="button" className="mt-2 text-sm text-estuary-700 underline" onClick={() => setItems([])}>
          Clear this list
        </button>
      ) : null}
    </div>
  );
}

function UploadRow({ item }: { item: UploadItem }) {
  const s = item.state;
  const percent = s.phase === "sending" ? Math.round(s.fraction * 100) : s.phase === "waiting" ? 0 : 100;
  const text =
    s.phase === "waiting" ? "waiting" : s.phase === "sending" ? `sending ${percent} %` : s.phase === "reading" ? "reading the film…" : s.phase === "stored" ? "stored" : "not stored";
  return (
    <li className="rounded-md border border-line bg-card px-3 py-2 text-sm">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <span className="min-w-0 truncate font-bold">{item.file.name}</span>
        <span className={`figures text-xs ${s.phase === "failed" ? "font-bold text-rust-ink" : s.phase === "stored" ? "text-moss-ink" : "text-ink-soft"}`}>
          {megabytes(item.file.size)} · {text}
        </span>
      </div>
      <div
        role="progressbar"
        aria-label={`Upload of ${item.file.name}`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={percent}
        className="mt-1 h-1.5 overflow-hidden rounded bg-paper"
      >
        <div
          className={`h-full ${s.phase === "failed" ? "bg-rust-ink" : s.phase === "stored" ? "bg-moss-ink" : "bg-estuary-600"} ${s.phase === "reading" ? "animate-pulse" : ""}`}
          style={{ width: `${percent}%` }}
        />
      </div>
      {s.phase === "failed" ? (
        <p role="alert" className="mt-1 text-rust-ink">
          {s.message}
          {s.duplicateOf ? (
            <>
              {" "}
              <a href={`#film-${s.duplicateOf}`} className="underline">Show that film</a>
            </>
          ) : null}
        </p>
      ) : null}
    </li>
  );
}
