import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { StrictMode } from "react";
import { createRoot } from "react-dom/client";
import { Navigate, RouterProvider, createBrowserRouter } from "react-router";
import { AppShell } from "./components/AppShell";
import { ForgotPassword } from "./routes/ForgotPassword";
import { InvitationAccept } from "./routes/InvitationAccept";
import { Members } from "./routes/Members";
import { NotFound } from "./routes/NotFound";
import { OutboxPage } from "./routes/Outbox";
import { ResetPassword } from "./routes/ResetPassword";
import { SignIn } from "./routes/SignIn";
import { SignUp } from "./routes/SignUp";
import { WorkshopHome } from "./routes/WorkshopHome";
import { WorkshopLayout } from "./routes/WorkshopLayout";
import { Workshops } from "./routes/Workshops";
import "./styles.css";

const queryClient = new QueryClient({
  defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false, staleTime: 10_000 } },
});

const router = createBrowserRouter([
  { path: "/sign-in", element: <SignIn /> },
  { path: "/sign-up", element: <SignUp /> },
  { path: "/forgot-password", element: <ForgotPassword /> },
  { path: "/reset-password", element: <ResetPassword /> },
  { path: "/invitations/:invitationId", element: <InvitationAccept /> },
  { path: "/outbox", element: <OutboxPage /> },
  {
    element: <AppShell />,
    children: [
      { path: "/", element: <Navigate to="/workshops" replace /> },
      { path: "/workshops", element: <Workshops /> },
      {
        path: "/w/:workshopId",
        element: <WorkshopLayout />,
        children: [
          { index: true, element: <WorkshopHome /> },
          { path: "members", element: <Members /> },
        ],
      },
    ],
  },
  { path: "*", element: <NotFound /> },
]);

createRoot(document.getElementById("root")!).render(
  <StrictMode>
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>
  </StrictMode>,
);
