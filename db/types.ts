// Shapes shared by the query modules.

/** Who is acting: every change is made by someone of a team. */
export interface Actor {
  id: string;
  teamId: string;
}
