// Sends visitors without a session to the sign-in page. It only redirects: every page, route
// handler and server action checks the session and the permission itself.
import { withAuth } from "next-auth/middleware";

export default withAuth({ pages: { signIn: "/sign-in" } });

export const config = {
  matcher: ["/((?!api|_next|sign-in|forbidden|favicon.ico|fonts).*)"],
};
