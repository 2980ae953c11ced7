// Routes of the app (lazy screens), each declaring the roles it is for.
import { createRouter, createWebHistory, type RouteComponent, type RouteRecordRaw } from 'vue-router'
import { useSessionStore } from '@/stores/session'
import { onUnauthenticated } from '@/api/client'
import { decide } from './guards'

// Screens other engineers add later: used as soon as the file exists, a "coming" page until then.
const later = import.meta.glob(['../views/BenchFloorView.vue', '../views/PlanView.vue', '../views/InsightsView.vue', '../views/PromiseView.vue'])
const comingSoon = () => import('@/views/ComingSoonView.vue')
const laterOr = (name: string): (() => Promise<RouteComponent>) => (later[`../views/${name}.vue`] as (() => Promise<RouteComponent>) | undefined) ?? comingSoon

export const routes: RouteRecordRaw[] = [
  { path: '/payment-done', name: 'payment-done', component: () => import('@/views/PaymentDoneView.vue'), meta: { public: true, title: 'Payment' } },
  { path: '/welcome/:token', name: 'welcome', component: () => import('@/views/AccountLinkView.vue'), meta: { public: true, title: 'Welcome' } },
  { path: '/new-password/:token', name: 'new-password', component: () => import('@/views/AccountLinkView.vue'), meta: { public: true, title: 'New password' } },
  { path: '/sign-in', name: 'sign-in', component: () => import('@/views/SignInView.vue'), meta: { guestOnly: true, title: 'Sign in' } },
  {
    path: '/',
    component: () => import('@/components/shell/ShellLayout.vue'),
    children: [
      { path: '', name: 'home', component: comingSoon },
      { path: 'plan', name: 'plan', component: () => import('@/views/PlanBoardView.vue'), meta: { roles: ['owner', 'manager', 'sales'], title: 'Plan board' } },
      {
        path: 'bench',
        name: 'bench',
        component: laterOr('BenchFloorView'),
        // The Scan ticket button sits at the top and the cards' buttons (weighing keypad, Weigh out, Pause, Finish) anywhere down the
        // page as it scrolls: a toast under the title bar or at the bottom would cover one of them.
        meta: { roles: ['owner', 'manager', 'bench'], title: 'My bench queue', toasts: 'title-bar' },
      },
      {
        path: 'job-bags/:id(\\d+)',
        name: 'job-bag',
        component: () => import('@/views/JobBagView.vue'),
        meta: { roles: ['owner', 'manager', 'bench', 'sales'], title: 'Job bag' },
      },
      {
        path: 'orders/:id(\\d+)?',
        name: 'orders',
        component: () => import('@/views/OrdersView.vue'),
        meta: { roles: ['owner', 'manager', 'sales'], title: 'Orders' },
      },
      { path: 'promise', name: 'promise', component: laterOr('PromiseView'), meta: { roles: ['owner', 'manager', 'sales'], title: 'Promise check' } },
      {
        path: 'quotes/:id(\\d+)?',
        name: 'quotes',
        component: () => import('@/views/QuotesView.vue'),
        meta: { roles: ['owner', 'manager', 'sales'], title: 'Quotes' },
      },
      {
        path: 'outbox',
        name: 'outbox',
        component: () => import('@/views/OutboxView.vue'),
        meta: { roles: ['owner', 'manager', 'sales'], title: 'Sent e-mail' },
      },
      {
        path: 'customers',
        name: 'customers',
        component: () => import('@/views/CustomersView.vue'),
        meta: { roles: ['owner', 'manager', 'sales'], title: 'Customers' },
      },
      { path: 'benches', name: 'benches', component: () => import('@/views/BenchesView.vue'), meta: { roles: ['owner', 'manager'], title: 'Benches' } },
      { path: 'people', name: 'people', component: () => import('@/views/PeopleView.vue'), meta: { roles: ['owner', 'manager'], title: 'People & skills' } },
      { path: 'calendar', name: 'calendar', component: () => import('@/views/CalendarView.vue'), meta: { roles: ['owner', 'manager'], title: 'Calendar' } },
      { path: 'routings', name: 'routings', component: () => import('@/views/RoutingsView.vue'), meta: { roles: ['owner', 'manager'], title: 'Routings' } },
      { path: 'metal', name: 'metal', component: () => import('@/views/MetalView.vue'), meta: { roles: ['owner', 'manager'], title: 'Metal' } },
      { path: 'insights', name: 'insights', component: laterOr('InsightsView'), meta: { roles: ['owner'], title: 'Insights' } },
      { path: 'money', name: 'money', component: () => import('@/views/MoneyView.vue'), meta: { roles: ['owner'], title: 'Money' } },
      { path: 'team', name: 'team', component: () => import('@/views/TeamView.vue'), meta: { roles: ['owner'], title: 'Team access' } },
      { path: 'settings', name: 'settings', component: () => import('@/views/SettingsView.vue'), meta: { roles: ['owner'], title: 'Workshop settings' } },
      { path: 'not-allowed', name: 'not-allowed', component: () => import('@/views/NotAllowedView.vue'), meta: { title: 'Not for your role' } },
      { path: ':pathMatch(.*)*', name: 'not-found', component: () => import('@/views/NotFoundView.vue'), meta: { title: 'Page not found' } },
    ],
  },
]

export function createAppRouter() {
  const router = createRouter({ history: createWebHistory(import.meta.env.BASE_URL), routes })
  router.beforeEach(async (to) => {
    const session = useSessionStore()
    await session.ensure()
    return decide(to, session.role)
  })
  router.afterEach((to) => {
    document.title = to.meta.title ? `${to.meta.title} · Millgrain` : 'Millgrain'
  })
  // A session that ends on the server (signed out elsewhere, switched off) sends the user to sign in.
  onUnauthenticated(() => {
    const session = useSessionStore()
    if (!session.signedIn) return
    session.forget()
    void router.push({ name: 'sign-in', query: { redirect: router.currentRoute.value.fullPath } })
  })
  return router
}
