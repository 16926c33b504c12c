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
import { Loading } from "./components/ui";
import { meQuery, workshopQuery } from "./lib/queries";
import { runReportQuery, sharedReportQuery } from "./features/runs/report-queries";
import "./styles.css";

// Screens load on first visit, through the router's `lazy` (the module is fetched while the router
// navigates, then the screen renders once). React.lazy under a Suspense fallback was measured
// slower: React holds a revealed screen until 300 ms after its fallback appeared, on every first
// visit (docs/run-report.md, "Speed").
// Recordings screens (tables, the plot, the scenario generator) load on first visit only.
const loadRecordings = () => import("./routes/Recordings").then((m) => ({ Component: m.Recordings }));
const loadRecordingPage = () => import("./routes/RecordingPage").then((m) => ({ Component: m.RecordingPage }));
const loadScenarioEditor = () => import("./routes/ScenarioEditor").then((m) => ({ Component: m.ScenarioEditor }));
const loadAirframes = () => import("./routes/Airframes").then((m) => ({ Component: m.Airframes }));
const loadAirframeChannels = () => import("./routes/AirframeChannels").then((m) => ({ Component: m.AirframeChannels }));
const loadCaptureStart = () => import("./routes/Capture").then((m) => ({ Component: m.CaptureStart }));
const loadCaptureLive = () => import("./routes/Capture").then((m) => ({ Component: m.CaptureLive }));
// Panel screens (issue 4): the panels table, one panel's page, a pointer's scale page.
const loadPanels = () => import("./routes/Panels").then((m) => ({ Component: m.Panels }));
const loadPanelPage = () => import("./routes/PanelPage").then((m) => ({ Component: m.PanelPage }));
const loadPanelScale = () => import("./routes/PanelScale").then((m) => ({ Component: m.PanelScale }));
// Run screens (issues 5 and 6): the runs table, setting one up, the console, the report, a shared report.
const loadRuns = () => import("./routes/Runs").then((m) => ({ Component: m.Runs }));
const loadRunSetup = () => import("./routes/RunSetup").then((m) => ({ Component: m.RunSetup }));
const loadRunConsole = () => import("./routes/RunConsole").then((m) => ({ Component: m.RunConsole }));
const loadVirtualPanelWindow = () => import("./routes/VirtualPanelWindow").then((m) => ({ Component: m.VirtualPanelWindow }));
const loadRunReport = () => import("./routes/RunReport").then((m) => ({ Component: m.RunReport }));
const loadRunCompare = () => import("./routes/RunCompare").then((m) => ({ Component: m.RunCompare }));
const loadSharedReport = () => import("./routes/SharedReport").then((m) => ({ Component: m.SharedReport }));

const queryClient = new QueryClient({
  defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false, staleTime: 10_000 } },
});

/**
 * Loaders that only start a screen's requests and never wait for them: the answers are on their
 * way while the route's module loads and the screens above render, instead of after (the query
 * hooks then find them in flight). Returning at once keeps navigation as quick as without them.
 */
const prefetch =
  <P,>(start: (params: P) => void) =>
  ({ params }: { params: P }) => {
    start(params);
    return null;
  };

const router = createBrowserRouter([
  { path: "/sign-in", element: <SignIn /> },
  { path: "/sign-up", element: <SignUp /> },
  { path: "/forgot-password", element: <ForgotPassword /> },
  { path: "/reset-password", element: <ResetPassword /> },
  { path: "/invitations/:invitationId", element: <InvitationAccept /> },
  { path: "/outbox", element: <OutboxPage /> },
  {
    path: "/shared/:token",
    lazy: loadSharedReport,
    hydrateFallbackElement: <Loading what="Opening" />,
    loader: prefetch((p: { token?: string }) => void queryClient.prefetchQuery(sharedReportQuery(p.token ?? ""))),
  },
  {
    element: <AppShell />,
    hydrateFallbackElement: <Loading what="Opening" />,
    loader: prefetch(() => void queryClient.prefetchQuery(meQuery)),
    children: [
      { path: "/", element: <Navigate to="/workshops" replace /> },
      { path: "/workshops", element: <Workshops /> },
      {
        path: "/w/:workshopId",
        element: <WorkshopLayout />,
        loader: prefetch((p: { workshopId?: string }) => void queryClient.prefetchQuery(workshopQuery(p.workshopId ?? ""))),
        children: [
          { index: true, element: <WorkshopHome /> },
          { path: "members", element: <Members /> },
          { path: "recordings", lazy: loadRecordings },
          { path: "recordings/compose", lazy: loadScenarioEditor },
          { path: "recordings/capture", lazy: loadCaptureStart },
          { path: "recordings/capture/:captureId", lazy: loadCaptureLive },
          { path: "recordings/airframes", lazy: loadAirframes },
          { path: "recordings/airframes/:airframeId", lazy: loadAirframeChannels },
          { path: "recordings/:recordingId", lazy: loadRecordingPage },
          { path: "panels", lazy: loadPanels },
          { path: "panels/:panelId", lazy: loadPanelPage },
          { path: "panels/:panelId/pointers/:elementId", lazy: loadPanelScale },
          { path: "runs", lazy: loadRuns },
          { path: "runs/new", lazy: loadRunSetup },
          { path: "runs/:runId", lazy: loadRunConsole },
          { path: "runs/:runId/panels/:panelId/virtual", lazy: loadVirtualPanelWindow },
          {
            path: "runs/:runId/report",
            lazy: loadRunReport,
            loader: prefetch((p: { workshopId?: string; runId?: string }) => void queryClient.prefetchQuery(runReportQuery(p.workshopId ?? "", p.runId ?? ""))),
          },
          { path: "runs/:runId/compare/:otherRunId", lazy: loadRunCompare },
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
