import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { StrictMode, Suspense, lazy, type ReactNode } from "react";
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
import "./styles.css";

// Recordings screens (tables, the plot, the scenario generator) load on first visit only.
const Recordings = lazy(() => import("./routes/Recordings").then((m) => ({ default: m.Recordings })));
const RecordingPage = lazy(() => import("./routes/RecordingPage").then((m) => ({ default: m.RecordingPage })));
const ScenarioEditor = lazy(() => import("./routes/ScenarioEditor").then((m) => ({ default: m.ScenarioEditor })));
const Airframes = lazy(() => import("./routes/Airframes").then((m) => ({ default: m.Airframes })));
const AirframeChannels = lazy(() => import("./routes/AirframeChannels").then((m) => ({ default: m.AirframeChannels })));
const CaptureStart = lazy(() => import("./routes/Capture").then((m) => ({ default: m.CaptureStart })));
const CaptureLive = lazy(() => import("./routes/Capture").then((m) => ({ default: m.CaptureLive })));
// Panel screens (issue 4): the panels table, one panel's page, a pointer's scale page.
const Panels = lazy(() => import("./routes/Panels").then((m) => ({ default: m.Panels })));
const PanelPage = lazy(() => import("./routes/PanelPage").then((m) => ({ default: m.PanelPage })));
const PanelScale = lazy(() => import("./routes/PanelScale").then((m) => ({ default: m.PanelScale })));
// Run screens (issues 5 and 6): the runs table, setting one up, the console, the report, a shared report.
const Runs = lazy(() => import("./routes/Runs").then((m) => ({ default: m.Runs })));
const RunSetup = lazy(() => import("./routes/RunSetup").then((m) => ({ default: m.RunSetup })));
const RunConsole = lazy(() => import("./routes/RunConsole").then((m) => ({ default: m.RunConsole })));
const VirtualPanelWindow = lazy(() => import("./routes/VirtualPanelWindow").then((m) => ({ default: m.VirtualPanelWindow })));
const RunReport = lazy(() => import("./routes/RunReport").then((m) => ({ default: m.RunReport })));
const RunCompare = lazy(() => import("./routes/RunCompare").then((m) => ({ default: m.RunCompare })));
const SharedReport = lazy(() => import("./routes/SharedReport").then((m) => ({ default: m.SharedReport })));
const later = (screen: ReactNode) => <Suspense fallback={<Loading what="Opening" />}>{screen}</Suspense>;

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
  { path: "/shared/:token", element: later(<SharedReport />) },
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
          { path: "recordings", element: later(<Recordings />) },
          { path: "recordings/compose", element: later(<ScenarioEditor />) },
          { path: "recordings/capture", element: later(<CaptureStart />) },
          { path: "recordings/capture/:captureId", element: later(<CaptureLive />) },
          { path: "recordings/airframes", element: later(<Airframes />) },
          { path: "recordings/airframes/:airframeId", element: later(<AirframeChannels />) },
          { path: "recordings/:recordingId", element: later(<RecordingPage />) },
          { path: "panels", element: later(<Panels />) },
          { path: "panels/:panelId", element: later(<PanelPage />) },
          { path: "panels/:panelId/pointers/:elementId", element: later(<PanelScale />) },
          { path: "runs", element: later(<Runs />) },
          { path: "runs/new", element: later(<RunSetup />) },
          { path: "runs/:runId", element: later(<RunConsole />) },
          { path: "runs/:runId/panels/:panelId/virtual", element: later(<VirtualPanelWindow />) },
          { path: "runs/:runId/report", element: later(<RunReport />) },
          { path: "runs/:runId/compare/:otherRunId", element: later(<RunCompare />) },
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
