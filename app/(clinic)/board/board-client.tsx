"use client";
// The deviation board: one page of flags from /api/flags, sortable and filterable; actions update the
// list in place (TanStack Query invalidation), no reload.
import { keepPreviousData, useQuery, useQueryClient } from "@tanstack/react-query";
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type SortingState } from "@tanstack/react-table";
import Link from "next/link";
import { useMemo, useState } from "react";
import { fetchJson } from "@/lib/client/api";
import { formatDateTime, sideLabel } from "@/lib/format";
import { figuresSummary, planWords, type FlagPlan } from "@/lib/followup/rules";
import type { Sparkline as SparkData } from "@/lib/followup/trend";
import { Button } from "@/components/ui/button";
import { Tag } from "@/components/ui/card";
import { Select } from "@/components/ui/field";
import { FlagActions } from "@/components/followup/flag-actions";
import { Sparkline } from "@/components/followup/sparkline";

export interface BoardRow {
  id: string;
  episodeId: string;
  patient: { id: string; name: string; hospitalNumber: string };
  side: string;
  rule: string;
  ruleLabel: string;
  state: string;
  figures: Record<string, unknown>;
  reason: string;
  filmId: string | null;
  raisedAt: string;
  ageDays: number;
  acknowledgedBy: string | null;
  resolvedBy: string | null;
  resolvedAt: string | null;
  resolutionNote: string | null;
  plan: FlagPlan | null;
  spark: SparkData | null;
}

const STATE_TONES: Record<string, "alarm" | "watch" | "good" | "neutral"> = { open: "alarm", acknowledged: "watch", resolved: "good", superseded: "neutral" };
const SORT_IDS = ["patient", "rule", "raised", "state"] as const;

const col = createColumnHelper<BoardRow>();

export function BoardClient({ canResolve, showDiaryLink, rules, initialRule }: { canResolve: boolean; showDiaryLink: boolean; rules: { value: string; label: string }[]; initialRule: string }) {
  const queryClient = useQueryClient();
  const [rule, setRule] = useState(initialRule);
  const [state, setState] = useState("live");
  const [minAge, setMinAge] = useState("");
  const [page, setPage] = useState(1);
  const [sorting, setSorting] = useState<SortingState>([{ id: "raised", desc: true }]);
  const [notice, setNotice] = useState<string | null>(null);
  const pageSize = 25;

  const sort = sorting[0];
  const params = new URLSearchParams({ page: String(page), pageSize: String(pageSize), state, sort: sort?.id ?? "raised", dir: sort?.desc ? "desc" : "asc" });
  if (rule) params.set("rule", rule);
  if (minAge) params.set("minAgeDays", minAge);
  const query = useQuery({
    queryKey: ["flags", params.toString()],
    queryFn: () => fetchJson<{ rows: BoardRow[]; total: number }>(`/api/flags?${params.toString()}`),
    placeholderData: keepPreviousData,
  });

  const columns = useMemo(
    () => [
      col.accessor((r) => r.patient.name, {
        id: "patient",
        header: "Patient",
        cell: (c) => (
          <div>
            <Link href={`/episodes/${c.row.original.episodeId}`} className="font-bold text-estuary-700 underline-offset-2 hover:underline">{c.getValue()}</Link>
            <div className="figures text-xs text-ink-soft">{c.row.original.patient.hospitalNumber} · {sideLabel(c.row.original.side)}</div>
          </div>
        ),
      }),
      col.accessor("ruleLabel", {
        id: "rule",
        header: "Rule",
        cell: (c) => (
          <div className="max-w-md">
            <div className="font-bold">{c.getValue()}</div>
            <div className="figures text-xs">{figuresSummary(c.row.original.rule, c.row.original.figures)}</div>
            <details className="text-xs text-ink-soft">
              <summary className="cursor-pointer">Why</summary>
              <p className="mt-1">{c.row.original.reason}</p>
            </details>
          </div>
        ),
      }),
      col.display({ id: "trend", header: "Trend", cell: (c) => <Sparkline data={c.row.original.spark} /> }),
      col.accessor("raisedAt", {
        id: "raised",
        header: "Raised",
        cell: (c) => (
          <div className="whitespace-nowrap">
            <div>{formatDateTime(c.getValue())}</div>
            <div className="text-xs text-ink-soft">{c.row.original.ageDays === 0 ? "today" : `${c.row.original.ageDays} day${c.row.original.ageDays === 1 ? "" : "s"} ago`}</div>
          </div>
        ),
      }),
      col.accessor("state", {
        id: "state",
        header: "State",
        cell: (c) => (
          <div>
            <Tag tone={STATE_TONES[c.getValue()] ?? "neutral"}>{c.getValue()}</Tag>
            {c.row.original.acknowledgedBy && c.getValue() === "acknowledged" ? <div className="text-xs text-ink-soft">by {c.row.original.acknowledgedBy}</div> : null}
            {c.getValue() === "resolved" ? <div className="text-xs text-ink-soft">{planWords(c.row.original.plan)}{c.row.original.resolvedBy ? ` · ${c.row.original.resolvedBy}` : ""}</div> : null}
          </div>
        ),
      }),
      col.display({
        id: "actions",
        header: () => <span className="sr-only">Actions</span>,
        cell: (c) => {
          const r = c.row.original;
          const live = r.state === "open" || r.state === "acknowledged";
          return (
            <div className="space-y-2">
              {canResolve && live ? (
                <FlagActions
                  flagId={r.id}
                  state={r.state}
                  label={`${r.ruleLabel}, ${r.patient.name}`}
                  onDone={(m) => {
                    setNotice(m);
                    void queryClient.invalidateQueries({ queryKey: ["flags"] });
                  }}
                />
              ) : null}
              {showDiaryLink && live ? (
                <Link href={`/diary?episode=${r.episodeId}`} className="text-sm font-bold text-estuary-700 underline">Book in the follow-up diary</Link>
              ) : null}
            </div>
          );
        },
      }),
    ],
    [canResolve, showDiaryLink, queryClient],
  );

  const table = useReactTable({
    data: query.data?.rows ?? [],
    columns,
    state: { sorting },
    manualSorting: true,
    manualPagination: true,
    enableSortingRemoval: false,
    onSortingChange: (s) => {
      setSorting(s);
      setPage(1);
    },
    getCoreRowModel: getCoreRowModel(),
  });
  const total = query.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / pageSize));

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-end gap-4" role="group" aria-label="Filters">
        <label className="text-sm font-bold">
          Rule
          <Select value={rule} onChange={(e) => { setRule(e.target.value); setPage(1); }} className="min-w-56">
            <option value="">All rules</option>
            {rules.map((r) => <option key={r.value} value={r.value}>{r.label}</option>)}
          </Select>
        </label>
        <label className="text-sm font-bold">
          State
          <Select value={state} onChange={(e) => { setState(e.target.value); setPage(1); }}>
            <option value="live">Needing a decision (open or acknowledged)</option>
            <option value="open">Open</option>
            <option value="acknowledged">Acknowledged</option>
            <option value="resolved">Resolved</option>
            <option value="superseded">Superseded</option>
            <option value="all">All</option>
          </Select>
        </label>
        <label className="text-sm font-bold">
          Age
          <Select value={minAge} onChange={(e) => { setMinAge(e.target.value); setPage(1); }}>
            <option value="">Any age</option>
            <option value="1">Raised 1 day ago or more</option>
            <option value="3">3 days or more</option>
            <option value="7">7 days or more</option>
          </Select>
        </label>
      </div>
      <p aria-live="polite" className="min-h-5 text-sm font-bold text-moss-ink">{notice}</p>
      <div className="overflow-x-auto rounded-lg border border-line bg-card">
        <table className="w-full text-left text-sm" aria-label="Flags">
          <thead className="bg-estuary-50 text-estuary-900">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => {
                  const sortable = (SORT_IDS as readonly string[]).includes(h.column.id);
                  const dir = h.column.getIsSorted();
                  return (
                    <th key={h.id} scope="col" className="px-3 py-2 align-bottom" aria-sort={dir === "asc" ? "ascending" : dir === "desc" ? "descending" : undefined}>
                      {sortable ? (
                        <button type="button" className="font-bold" onClick={h.column.getToggleSortingHandler()}>
                          {flexRender(h.column.columnDef.header, h.getContext())} {dir === "asc" ? "▲" : dir === "desc" ? "▼" : ""}
                        </button>
                      ) : (
                        <span className="font-bold">{flexRender(h.column.columnDef.header, h.getContext())}</span>
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((r) => (
              <tr key={r.id} className="border-t border-line align-top" data-flag-id={r.original.id}>
                {r.getVisibleCells().map((c) => (
                  <td key={c.id} className="px-3 py-2">{flexRender(c.column.columnDef.cell, c.getContext())}</td>
                ))}
              </tr>
            ))}
            {query.isSuccess && total === 0 ? (
              <tr>
                <td colSpan={6} className="px-4 py-6 text-center text-ink-soft">No flag matches these filters.</td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
      {query.isError ? <p role="alert" className="font-bold text-rust-ink">{(query.error).message}</p> : null}
      <div className="flex items-center gap-3 text-sm">
        <Button tone="quiet" disabled={page <= 1} onClick={() => setPage((p) => p - 1)}>Previous</Button>
        <span>Page {page} of {pages} · {total} flag{total === 1 ? "" : "s"}</span>
        <Button tone="quiet" disabled={page >= pages} onClick={() => setPage((p) => p + 1)}>Next</Button>
      </div>
    </div>
  );
}
