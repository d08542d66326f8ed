// The invented demo hospital and its team: one user per role, and a second team to prove isolation.
export const DEMO_PASSWORD = "rimwatch-demo-2026";

export const DEMO_TEAMS = [
  { key: "larkmoor", name: "Larkmoor respiratory team", hospital: "Larkmoor General Hospital" },
  { key: "ashby", name: "Ashby Cross chest unit", hospital: "Ashby Cross Infirmary" },
] as const;

export const DEMO_USERS = [
  { team: "larkmoor", role: "registrar", email: "registrar@larkmoor.example", name: "Dr Imogen Tallis" },
  { team: "larkmoor", role: "consultant", email: "consultant@larkmoor.example", name: "Dr Faisal Orme" },
  { team: "larkmoor", role: "nurse", email: "nurse@larkmoor.example", name: "Nurse Bronwen Achebe" },
  { team: "larkmoor", role: "admin", email: "admin@larkmoor.example", name: "Petra Lindqvist-Hale" },
  { team: "ashby", role: "registrar", email: "registrar@ashby.example", name: "Dr Tomasz Redfern" },
  { team: "ashby", role: "consultant", email: "consultant@ashby.example", name: "Dr Ngozi Farrant" },
] as const;
