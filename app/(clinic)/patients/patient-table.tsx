"use client";
import { keepPreviousData, useQuery } from "@tanstack/react-query";
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type SortingState } from "@tanstack/react-table";
import Link from "next/link";
import { useEffect, useState } from "react";
import { fetchJson } from "@/lib/client/api";
import { formatDate } from "@/lib/format";
import { TextInput } from "@/components/ui/field";
import { Button } from "@/components/ui/button";

interface Row {
  id: string;
  hospital_number: string;
  family_name: string;
  given_name: string;
  date_of_birth: string;
  sex: string;
  active_episodes: number;
}

const col = createColumnHelper<Row>();
const columns = [
  col.accessor((r) => `${r.family_name}, ${r.given_name}`, {
    id: "name",
    header: "Name",
    cell: (c) => (
      <Link href={`/patients/${c.row.original.id}`} className="font-bold text-estuary-700 underline-offset-2 hover:underline">
        {c.getValue()}
      </Link>
    ),
  }),
  col.accessor("hospital_number", { id: "hospitalNumber", header: "Hospital number", cell: (c) => <span className="figures">{c.getValue()}</span> }),
  col.accessor("date_of_birth", { id: "dateOfBirth", header: "Date of birth", cell: (c) => formatDate(c.getValue()) }),
  col.accessor("active_episodes", { id: "active", header: "Active episodes", enableSorting: false, cell: (c) => (c.getValue() > 0 ? c.getValue() : "—") }),
];

export function PatientTable() {
  const [q, setQ] = useState("");
  const [debounced, setDebounced] = useState("");
  const [page, setPage] = useState(1);
  const [sorting, setSorting] = useState<SortingState>([{ id: "name", desc: false }]);
  const pageSize = 20;

  useEffect(() => {
    const t = setTimeout(() => { setDebounced(q); setPage(1); }, 250);
    return () => clearTimeout(t);
  }, [q]);

  const sort = sorting[0];
  const params = new URLSearchParams({ page: String(page), pageSize: String(pageSize), sort: sort?.id ?? "name", dir: sort?.desc ? "desc" : "asc" });
  if (debounced) params.set("q", debounced);
  const query = useQuery({
    queryKey: ["patients", params.toString()],
    queryFn: () => fetchJson<{ rows: Row[]; total: number }>(`/api/patients?${params.toString()}`),
    placeholderData: keepPreviousData,
  });

  const table = useReactTable({
    data: query.data?.rows ?? [],
    columns,
    state: { sorting },
    manualSorting: true,
    manualPagination: true,
    enableSortingRemoval: false,
    onSortingChange: (s) => { setSorting(s); setPage(1); },
    getCoreRowModel: getCoreRowModel(),
  });
  const total = query.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / pageSize));

  return (
    <div className="space-y-3">
      <div className="max-w-md">
        <label htmlFor="patient-search" className="sr-only">Search patients</label>
        <TextInput id="patient-search" placeholder="Name or hospital number" value={q} onChange={(e) => setQ(e.target.value)} />
      </div>
      <div className="overflow-x-auto rounded-lg border border-line bg-card">
        <table className="w-full text-left text-sm">
          <thead className="bg-estuary-50 text-estuary-900">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => (
                  <th key={h.id} scope="col" className="px-4 py-2" aria-sort={h.column.getIsSorted() === "asc" ? "ascending" : h.column.getIsSorted() === "desc" ? "descending" : undefined}>
                    {h.column.getCanSort() ? (
                      <button type="button" className="font-bold" onClick={h.column.getToggleSortingHandler()}>
                        {flexRender(h.column.columnDef.header, h.getContext())} {h.column.getIsSorted() === "asc" ? "▲" : h.column.getIsSorted() === "desc" ? "▼" : ""}
                      </button>
                    ) : (
                      <span className="font-bold">{flexRender(h.column.columnDef.header, h.getContext())}</span>
                    )}
                  </th>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((r) => (
              <tr key={r.id} className="border-t border-line">
                {r.getVisibleCells().map((c) => (
                  <td key={c.id} className="px-4 py-2">{flexRender(c.column.columnDef.cell, c.getContext())}</td>
                ))}
              </tr>
            ))}
            {query.isSuccess && total === 0 ? (
              <tr><td colSpan={4} className="px-4 py-6 text-center text-ink-soft">No patient matches “{debounced}”.</td></tr>
            ) : null}
          </tbody>
        </table>
      </div>
      {query.isError ? <p role="alert" className="font-bold text-rust-ink">{query.error.message}</p> : null}
      <div className="flex items-center gap-3 text-sm" aria-live="polite">
        <Button tone="quiet" disabled={page <= 1} onClick={() => setPage((p) => p - 1)}>Previous</Button>
        <span>Page {page} of {pages} · {total} patients</span>
        <Button tone="quiet" disabled={page >= pages} onClick={() => setPage((p) => p + 1)}>Next</Button>
      </div>
    </div>
  );
}
